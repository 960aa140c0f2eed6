// Settings to and from JSON through nlohmann-json's serializer hooks: enumerations by their
// names and text settings by their text (tannery/names.hpp), absent optionals as null,
// and the settings structs by their field tables (tannery/sim/settings.hpp). The scenario
// reader (TOML) and the Python module read values through the same read_value, so one setting
// is checked the same way wherever it comes from.
#pragma once

#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <type_traits>

#include "tannery/error.hpp"
#include "tannery/sim/settings.hpp"

namespace nlohmann {

template <tannery::Named E>
struct adl_serializer<E> {
  static void to_json(json& j, E value) { j = tannery::name_of(value); }
  static void from_json(const json& j, E& value) {
    if (!j.is_string()) {
      throw tannery::Error(std::string(tannery::Names<E>::setting) +
                           " must be a string, one of: " + tannery::names_list<E>());
    }
    value = tannery::parse_name<E>(j.get<std::string>());
  }
};

template <tannery::Textual T>
struct adl_serializer<T> {
  static void to_json(json& j, const T& value) { j = tannery::SettingText<T>::format(value); }
  static void from_json(const json& j, T& value) {
    if (!j.is_string()) {
      throw tannery::Error(std::string(tannery::SettingText<T>::setting) + " must be a string " +
                           std::string(tannery::SettingText<T>::syntax) + ", got " + j.dump());
    }
    value = tannery::parse_text<T>(j.get<std::string>());
  }
};

template <class T>
struct adl_serializer<std::optional<T>> {
  static void to_json(json& j, const std::optional<T>& v) {
    if (v) {
      j = *v;
    } else {
      j = nullptr;
    }
  }
};

}  // namespace nlohmann

namespace tannery {

// One setting's value from JSON, checked: Error "'key' must be ..." (callers add where).
template <class T>
T read_value(const nlohmann::json& v, std::string_view key) {
  const std::string name = std::string("'").append(key).append("'");
  if constexpr (std::is_same_v<T, bool>) {
    if (!v.is_boolean()) throw Error(name + " must be true or false");
    return v.get<bool>();
  } else if constexpr (std::is_same_v<T, std::string>) {
    if (!v.is_string()) throw Error(name + " must be a string");
    return v.get<std::string>();
  } else if constexpr (std::is_integral_v<T>) {
    const bool fits =
        v.is_number_unsigned()
            ? v.get<std::uint64_t>() <= static_cast<std::uint64_t>(std::numeric_limits<T>::max())
            : v.is_number_integer() &&
                  v.get<std::int64_t>() >=
                      static_cast<std::int64_t>(std::numeric_limits<T>::min()) &&
                  (v.get<std::int64_t>() < 0 ||
                   static_cast<std::uint64_t>(v.get<std::int64_t>()) <=
                       static_cast<std::uint64_t>(std::numeric_limits<T>::max()));
    if (!fits) {
      throw Error(name + " must be an integer from " +
                  std::to_string(std::numeric_limits<T>::min()) + " to " +
                  std::to_string(std::numeric_limits<T>::max()));
    }
    return v.get<T>();
  } else if constexpr (std::is_floating_point_v<T>) {
    if (!v.is_number() || !std::isfinite(v.get<double>()))
      throw Error(name + " must be a finite number");
    return v.get<T>();
  } else if constexpr (is_optional<T>) {
    if (v.is_null()) return std::nullopt;
    return read_value<typename T::value_type>(v, key);
  } else {
    try {
      return v.get<T>();
    } catch (const Error& e) {
      throw Error(name + ": " + e.what());
    }
  }
}

// The settings' fields as one JSON object, keyed by their keys.
template <class S>
nlohmann::json fields_json(const S& s) {
  nlohmann::json j = nlohmann::json::object();
  for_each_field<S>([&](const auto& field) { j[std::string(field.key)] = s.*field.member; });
  return j;
}

// The fields present in object j, checked; others keep their values. where names the place in
// errors ("decoder"); keys that are no field are left to the caller.
template <class S>
void read_fields(const nlohmann::json& j, S& s, std::string_view where) {
  if (!j.is_object()) throw Error(std::string(where) + " must be an object");
  for_each_field<S>([&](const auto& field) {
    using T = typename std::decay_t<decltype(field)>::Value;
    const auto it = j.find(std::string(field.key));
    if (it == j.end()) return;
    try {
      s.*field.member = read_value<T>(*it, field.key);
    } catch (const Error& e) {
      throw Error(std::string(where) + ": " + e.what());
    }
  });
}

inline void to_json(nlohmann::json& j, const DecoderSettings& s) {
  j = fields_json(s);
}
inline void from_json(const nlohmann::json& j, DecoderSettings& s) {
  read_fields(j, s, "decoder");
}
inline void to_json(nlohmann::json& j, const ChannelSpec& s) {
  j = fields_json(s);
}
inline void from_json(const nlohmann::json& j, ChannelSpec& s) {
  read_fields(j, s, "channel");
}
inline void to_json(nlohmann::json& j, const StopRules& s) {
  j = fields_json(s);
}
inline void from_json(const nlohmann::json& j, StopRules& s) {
  read_fields(j, s, "stop");
}

}  // namespace tannery
