// Command-line options bound to the typed fields of a settings struct, from its field table
// (tannery/sim/settings.hpp): flag, help and default come from the table, enumerations take
// the names of their name table, and each option writes its member of `given` directly.
// overlay() then copies the fields the command line gave onto a base — the library's defaults,
// a scenario's settings or a recorded run's — so every setting has one default, in the library.
#pragma once

#include <CLI/CLI.hpp>
#include <algorithm>
#include <functional>
#include <optional>
#include <string>
#include <type_traits>
#include <utility>
#include <vector>

#include "tannery/names.hpp"
#include "tannery/sim/settings.hpp"

namespace tannery::cli {

// Refuses a negative value for an unsigned option (CLI11 would wrap it to a huge count).
extern const CLI::Validator kNonNegative;

// Accepts the names of an enumeration's name table (for options kept as text, e.g. where empty
// means "from the file extension").
template <Named E>
CLI::Validator names_of() {
  std::vector<std::string> names;
  for (const auto& entry : Names<E>::table) names.emplace_back(entry.second);
  return CLI::IsMember(names);
}

// An option taking the names of an enumeration's name table, written to target as a value.
template <Named E>
CLI::Option* add_named_option(CLI::App& app, const std::string& flag, E& target,
                              const std::string& help) {
  return app.add_option(flag, target, help)
      ->transform(CLI::CheckedTransformer(name_map<E>()))
      ->default_str(std::string(name_of(target)));
}

// An option taking a setting's text (SettingText), written to target (a T or an optional<T>).
template <class T>
CLI::Option* add_setting_option(CLI::App& app, const std::string& flag, T& target,
                                const std::string& help) {
  using V = std::conditional_t<Textual<T>, T, optional_value_t<T>>;
  CLI::Option* o = app.add_option_function<std::string>(
      flag,
      [&target, flag](const std::string& text) {
        auto value = SettingText<V>::parse(text);
        if (!value) {
          throw CLI::ValidationError(
              flag, "'" + text + "': expected " + std::string(SettingText<V>::syntax));
        }
        target = std::move(*value);
      },
      help);
  if constexpr (Textual<T>) o->default_str(SettingText<T>::format(target));
  return o;
}

// --channel awgn|rayleigh:fast|rayleigh:block:B|bsc|bec: a channel kind with its fading block.
using ChannelModel = std::pair<ChannelKind, std::uint32_t>;
inline CLI::Option* add_channel_option(CLI::App& app, std::optional<ChannelModel>& target,
                                       const std::string& help) {
  return app.add_option_function<std::string>(
      "--channel",
      [&target](const std::string& text) {
        target = parse_channel_model(text);
        if (!target) {
          throw CLI::ValidationError(
              "--channel",
              "'" + text + "': expected awgn, rayleigh:fast, rayleigh:block:B, bsc or bec");
        }
      },
      help);
}

template <class S>
class SettingsOptions {
 public:
  S given;

  // Registers one option per field that has a flag; skip lists keys left out.
  void add_to(CLI::App& group, std::initializer_list<std::string_view> skip = {}) {
    for_each_field<S>([&](const auto& field) {
      if (field.flag.empty() || std::find(skip.begin(), skip.end(), field.key) != skip.end())
        return;
      bound_.push_back(
          {field.key, add(group, field),
           [member = field.member](S& base, const S& from) { base.*member = from.*member; }});
    });
  }
  // The fields given on the command line, copied onto base.
  void overlay(S& base) const {
    for (const Bound& b : bound_) {
      if (b.option->count() > 0) b.copy(base, given);
    }
  }
  // The option of a field, when the command line gave it.
  const CLI::Option* given_option(std::string_view key) const {
    for (const Bound& b : bound_) {
      if (b.key == key && b.option->count() > 0) return b.option;
    }
    return nullptr;
  }

 private:
  struct Bound {
    std::string_view key;
    CLI::Option* option;
    std::function<void(S&, const S&)> copy;
  };

  template <class Field>
  CLI::Option* add(CLI::App& group, const Field& field) {
    using T = typename Field::Value;
    auto& target = given.*field.member;
    const std::string flag(field.flag), help(field.help);
    if constexpr (std::is_same_v<T, bool>) {
      // "--no-early-stop" sets early_stop to false.
      return group.add_flag(flag.starts_with("--no-") ? flag + "{false}" : flag, target, help);
    } else if constexpr (Named<T>) {
      return add_named_option(group, flag, target, help);
    } else if constexpr (Textual<T> || (is_optional<T> && Textual<optional_value_t<T>>)) {
      return add_setting_option(group, flag, target, help);
    } else if constexpr (std::is_unsigned_v<T>) {
      return group.add_option(flag, target, help)->capture_default_str()->check(kNonNegative);
    } else {
      CLI::Option* o = group.add_option(flag, target, help);
      if constexpr (!is_optional<T>) o->capture_default_str();
      return o;
    }
  }
  std::vector<Bound> bound_;
};

}  // namespace tannery::cli
