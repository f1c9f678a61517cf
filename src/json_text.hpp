#pragma once
// JSON text of a document. Text that is not valid UTF-8 (from a file name or a source read
// without --encoding) is written with U+FFFD instead of ending the run.

#include <string>

#include <nlohmann/json.hpp>

namespace stipple {

template <class Json>
[[nodiscard]] std::string json_text(const Json& doc, int indent = 2) {
  std::string text = doc.dump(indent, ' ', false, Json::error_handler_t::replace);
  if (indent >= 0) text += "\n";
  return text;
}

}  // namespace stipple
