// One name table per enumeration: the names a setting's values have on the command line, in
// scenario files, in results files, in Python keywords and in error messages. An enumeration
// joins by specialising Names<E> next to its declaration:
//
//   template <> struct Names<Schedule> {
//     static constexpr std::string_view setting = "schedule";
//     static constexpr std::pair<Schedule, std::string_view> table[] = {
//         {Schedule::flooding, "flooding"}, {Schedule::layered, "layered"}};
//   };
#pragma once

#include <concepts>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <utility>

#include "tannery/error.hpp"

namespace tannery {

template <class E>
struct Names;

template <class E>
concept Named = requires {
  Names<E>::setting;
  Names<E>::table;
};

template <Named E>
constexpr std::string_view name_of(E value) {
  for (const auto& [v, name] : Names<E>::table) {
    if (v == value) return name;
  }
  return "?";
}

// Empty when name is none of E's names.
template <Named E>
constexpr std::optional<E> from_name(std::string_view name) {
  for (const auto& [v, n] : Names<E>::table) {
    if (n == name) return v;
  }
  return std::nullopt;
}

// "flooding, layered".
template <Named E>
std::string names_list() {
  std::string list;
  for (const auto& entry : Names<E>::table) {
    if (!list.empty()) list += ", ";
    list += entry.second;
  }
  return list;
}

// The value of a name; Error "schedule 'x' is not one of: flooding, layered" otherwise.
template <Named E>
E parse_name(std::string_view name) {
  if (const auto v = from_name<E>(name)) return *v;
  throw Error(std::string(Names<E>::setting) + " '" + std::string(name) +
              "' is not one of: " + names_list<E>());
}

// Names to values, as option parsers take them.
template <Named E>
std::map<std::string, E> name_map() {
  std::map<std::string, E> map;
  for (const auto& [v, name] : Names<E>::table) map.emplace(name, v);
  return map;
}

}  // namespace tannery

namespace tannery {

// Settings written as one short text with a syntax of their own ("6.2", "block:8x81",
// "random:7"): a type joins by specialising SettingText<T> beside its declaration, and every
// reader and writer of settings (CLI, scenarios, results JSON, Python) takes and gives that text.
//
//   template <> struct SettingText<Quantization> {
//     static constexpr std::string_view setting = "quantize";
//     static constexpr std::string_view syntax = "B.F or B.F:M:P (e.g. 6.2 or 5.1:5:7)";
//     static std::optional<Quantization> parse(std::string_view text);  // empty on bad syntax
//     static std::string format(const Quantization& q);
//   };
template <class T>
struct SettingText;

template <class T>
concept Textual = requires(std::string_view text, const T& value) {
  SettingText<T>::setting;
  SettingText<T>::syntax;
  { SettingText<T>::parse(text) } -> std::same_as<std::optional<T>>;
  { SettingText<T>::format(value) } -> std::same_as<std::string>;
};

// The value of a text; Error "quantize '7' must be B.F or B.F:M:P (...)" otherwise.
template <Textual T>
T parse_text(std::string_view text) {
  if (auto v = SettingText<T>::parse(text)) return *v;
  throw Error(std::string(SettingText<T>::setting) + " '" + std::string(text) + "' must be " +
              std::string(SettingText<T>::syntax));
}

}  // namespace tannery
