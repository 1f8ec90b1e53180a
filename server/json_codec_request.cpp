// Request side of the codec: request documents and data columns to C++ values.
#include <cmath>
#include <limits>
#include <set>

#include "server/json_codec.h"

namespace foothold {
namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();

std::string Got(const Json& value) {
  std::string text = value.dump();
  if (text.size() > 40) text = text.substr(0, 37) + "...";
  return "got " + text;
}

bool ExpectFiniteNumber(const Json& value, const std::string& field, double* out,
                        std::string* error) {
  if (value.is_number() && std::isfinite(value.get<double>())) {
    *out = value.get<double>();
    return true;
  }
  *error = field + ": expected a finite number, " + Got(value);
  return false;
}

bool ExpectString(const Json& value, const std::string& field, std::string* out,
                  std::string* error) {
  if (!value.is_string()) {
    *error = field + ": expected a string, " + Got(value);
    return false;
  }
  *out = value.get<std::string>();
  return true;
}

bool ExpectInteger(const Json& value, const std::string& field, long long min_value, long long* out,
                   std::string* error) {
  if (!value.is_number_integer() ||
      (value.is_number_unsigned() &&
       value.get<unsigned long long>() >
           static_cast<unsigned long long>(std::numeric_limits<long long>::max()))) {
    *error = field + ": expected an integer, " + Got(value);
    return false;
  }
  const long long parsed = value.get<long long>();
  if (parsed < min_value) {
    *error = field + " = " + std::to_string(parsed) + ": must be >= " + std::to_string(min_value);
    return false;
  }
  *out = parsed;
  return true;
}

bool ExpectInt(const Json& value, const std::string& field, int min_value, int* out,
               std::string* error) {
  long long parsed = 0;
  if (!ExpectInteger(value, field, min_value, &parsed, error)) return false;
  if (parsed > std::numeric_limits<int>::max()) {
    *error = field + " = " + std::to_string(parsed) + ": too large";
    return false;
  }
  *out = static_cast<int>(parsed);
  return true;
}

// A bound: a number, null (unbounded) or "inf" / "-inf".
bool DecodeBound(const Json& value, const std::string& field, double unbounded, double* out,
                 std::string* error) {
  if (value.is_null()) {
    *out = unbounded;
    return true;
  }
  if (value.is_string()) {
    const std::string text = value.get<std::string>();
    if (text == "inf" || text == "+inf" || text == "infinity") {
      *out = kInfinity;
      return true;
    }
    if (text == "-inf" || text == "-infinity") {
      *out = -kInfinity;
      return true;
    }
  }
  if (value.is_number() && !std::isnan(value.get<double>())) {
    *out = value.get<double>();
    return true;
  }
  *error = field + ": expected a number, null or \"inf\"/\"-inf\", " + Got(value);
  return false;
}

bool DecodeNamedValues(const Json& value, const std::string& field, std::vector<NamedValue>* out,
                       std::string* error) {
  if (!value.is_object()) {
    *error =
        field + ": expected an object of parameter values such as {\"height\": 1.5}, " + Got(value);
    return false;
  }
  out->clear();
  for (auto it = value.begin(); it != value.end(); ++it) {
    NamedValue entry;
    entry.name = it.key();
    if (!ExpectFiniteNumber(it.value(), field + "." + it.key(), &entry.value, error)) return false;
    out->push_back(entry);
  }
  return true;
}

bool DecodeBounds(const Json& value, std::vector<NamedBounds>* out, std::string* error) {
  if (!value.is_object()) {
    *error = "bounds: expected an object such as {\"center\": [400, 800]}, " + Got(value);
    return false;
  }
  out->clear();
  for (auto it = value.begin(); it != value.end(); ++it) {
    const std::string field = "bounds." + it.key();
    const Json& pair = it.value();
    if (!pair.is_array() || pair.size() != 2) {
      *error = field + ": expected [lower, upper], " + Got(pair);
      return false;
    }
    NamedBounds entry;
    entry.name = it.key();
    if (!DecodeBound(pair[0], field + "[0]", -kInfinity, &entry.lower, error) ||
        !DecodeBound(pair[1], field + "[1]", kInfinity, &entry.upper, error)) {
      return false;
    }
    if (entry.lower > entry.upper) {
      *error = field + ": lower " + pair[0].dump() + " > upper " + pair[1].dump();
      return false;
    }
    out->push_back(entry);
  }
  return true;
}

bool DecodeModel(const Json& value, ModelSpec* out, std::string* error) {
  if (!value.is_object()) {
    *error = "model: expected an object such as {\"family\": \"gaussian\"}, " + Got(value);
    return false;
  }
  ModelSpec spec;
  for (auto it = value.begin(); it != value.end(); ++it) {
    const std::string& key = it.key();
    const std::string field = "model." + key;
    const Json& item = it.value();
    if (key == "family") {
      if (!ExpectString(item, field, &spec.family, error)) return false;
      if (spec.family.empty()) {
        *error = field + ": expected a family name, got an empty string";
        return false;
      }
    } else if (key == "degree") {
      int degree = 0;
      if (!ExpectInt(item, field, 0, &degree, error)) return false;
      spec.degree = degree;
    } else if (key == "peaks") {
      if (item.is_string() && item.get<std::string>() == "auto") {
        spec.auto_peaks = true;
      } else {
        int peaks = 0;
        if (!item.is_number_integer()) {
          *error = field + ": expected a peak count or \"auto\", " + Got(item);
          return false;
        }
        if (!ExpectInt(item, field, 1, &peaks, error)) return false;
        spec.peaks = peaks;
      }
    } else if (key == "expression") {
      if (!ExpectString(item, field, &spec.expression, error)) return false;
      if (spec.expression.empty()) {
        *error = field + ": expected a maths expression, got an empty string";
        return false;
      }
    } else if (key == "parameters") {
      if (!item.is_array()) {
        *error = field + ": expected an array of parameter names, " + Got(item);
        return false;
      }
      for (size_t k = 0; k < item.size(); ++k) {
        std::string name;
        if (!ExpectString(item[k], field + "[" + std::to_string(k) + "]", &name, error)) {
          return false;
        }
        spec.parameters.push_back(name);
      }
    } else {
      *error = field + ": unknown field (expected family, degree, peaks, expression, parameters)";
      return false;
    }
  }
  *out = std::move(spec);
  return true;
}

// "compare": family names or model objects, e.g. ["gaussian", {"family": "multi_gaussian",
// "peaks": 2}]. Each entry must name a family (expressions are not compared).
bool DecodeCompare(const Json& value, std::vector<ModelSpec>* out, std::string* error) {
  if (!value.is_array() || value.empty()) {
    *error = "compare: expected a non-empty array of families such as [\"gaussian\", "
             "\"lorentzian\"], " + Got(value);
    return false;
  }
  out->clear();
  for (size_t k = 0; k < value.size(); ++k) {
    const std::string field = "compare[" + std::to_string(k) + "]";
    ModelSpec spec;
    if (value[k].is_string()) {
      spec.family = value[k].get<std::string>();
    } else if (value[k].is_object()) {
      std::string model_error;
      if (!DecodeModel(value[k], &spec, &model_error)) {
        // DecodeModel names its fields "model.*"; say which entry of compare it was.
        *error = field + ": " + model_error;
        return false;
      }
    } else {
      *error = field + ": expected a family name or a model object, " + Got(value[k]);
      return false;
    }
    if (spec.family.empty()) {
      *error = field + ": expected a catalogue family (expressions are not compared)";
      return false;
    }
    out->push_back(std::move(spec));
  }
  return true;
}

// The scalar options of the request, one key at a time. False when the key is unknown.
bool DecodeOption(const std::string& key, const Json& item, FitRequest* request, bool* known,
                  std::string* error) {
  *known = true;
  long long seed = 0;
  if (key == "label") return ExpectString(item, key, &request->label, error);
  if (key == "response") return ExpectString(item, key, &request->response, error);
  if (key == "sigma_column") return ExpectString(item, key, &request->sigma_column, error);
  if (key == "sigma_mode") return ExpectString(item, key, &request->sigma_mode, error);
  if (key == "loss") return ExpectString(item, key, &request->loss, error);
  if (key == "loss_scale") return ExpectFiniteNumber(item, key, &request->loss_scale, error);
  if (key == "method") return ExpectString(item, key, &request->method, error);
  if (key == "intervals") return ExpectString(item, key, &request->intervals, error);
  if (key == "starts") return ExpectInt(item, key, 1, &request->starts, error);
  if (key == "threads") return ExpectInt(item, key, 1, &request->threads, error);
  if (key == "max_iterations") return ExpectInt(item, key, 0, &request->max_iterations, error);
  if (key == "max_evaluations") return ExpectInt(item, key, 1, &request->max_evaluations, error);
  if (key == "seed") {
    if (item.is_number_unsigned()) {
      request->seed = item.get<std::uint64_t>();
      return true;
    }
    if (!ExpectInteger(item, key, 0, &seed, error)) return false;
    request->seed = static_cast<std::uint64_t>(seed);
    return true;
  }
  if (key == "deadline_seconds") {
    if (item.is_null()) {
      request->deadline_seconds = kInfinity;
      return true;
    }
    return ExpectFiniteNumber(item, key, &request->deadline_seconds, error);
  }
  *known = false;
  return false;
}

}  // namespace

bool ParseJsonText(const std::string& text, const std::string& what, Json* out,
                   std::string* error) {
  try {
    *out = Json::parse(text);
  } catch (const Json::exception& failure) {
    // Syntax errors and number overflow ("1e400") both land here; no exception escapes.
    std::string message = failure.what();
    // Drop the library's "[json.exception.parse_error.101] " tag; keep where and why.
    const size_t tag_end = message.find("] ");
    if (message.rfind("[json.exception", 0) == 0 && tag_end != std::string::npos) {
      message = message.substr(tag_end + 2);
    }
    *error = what + ": invalid JSON: " + message;
    return false;
  }
  return true;
}

bool DecodeDataColumns(const Json& value, const std::string& field, DataTable* out,
                       std::string* error) {
  if (!value.is_object() || value.empty()) {
    *error = field + ": expected an object of columns such as {\"x\": [...], \"y\": [...]}, " +
             Got(value);
    return false;
  }
  DataTable table;
  for (auto it = value.begin(); it != value.end(); ++it) {
    const std::string column_field = field + "." + it.key();
    const Json& column = it.value();
    if (!column.is_array()) {
      *error = column_field + ": expected an array of numbers, " + Got(column);
      return false;
    }
    std::vector<double> values(column.size());
    for (size_t i = 0; i < column.size(); ++i) {
      if (!ExpectFiniteNumber(column[i], column_field + "[" + std::to_string(i) + "]", &values[i],
                              error)) {
        return false;
      }
    }
    std::string column_error;
    if (!table.AddColumn(it.key(), std::move(values), &column_error)) {
      *error = field + ": " + column_error;
      return false;
    }
  }
  if (table.NumRows() == 0) {
    *error = field + ": the columns are empty: expected at least one row";
    return false;
  }
  *out = std::move(table);
  return true;
}

bool DecodeFitRequest(const Json& document, FitRequest* out, std::string* error) {
  if (!document.is_object()) {
    *error = "request: expected an object with model and data, " + Got(document);
    return false;
  }
  FitRequest request;
  for (auto it = document.begin(); it != document.end(); ++it) {
    const std::string& key = it.key();
    const Json& item = it.value();
    bool known = true;
    bool ok = true;
    if (key == "model") {
      ok = DecodeModel(item, &request.model, error);
    } else if (key == "data") {
      ok = DecodeDataColumns(item, "data", &request.data, error);
    } else if (key == "start") {
      ok = DecodeNamedValues(item, "start", &request.start, error);
    } else if (key == "fix") {
      ok = DecodeNamedValues(item, "fix", &request.fix, error);
    } else if (key == "bounds") {
      ok = DecodeBounds(item, &request.bounds, error);
    } else if (key == "compare") {
      ok = DecodeCompare(item, &request.compare, error);
    } else {
      ok = DecodeOption(key, item, &request, &known, error);
    }
    if (!known) {
      *error = key +
               ": unknown field (expected label, model, data, response, sigma_column, start, "
               "fix, bounds, sigma_mode, loss, loss_scale, method, starts, seed, threads, "
               "deadline_seconds, max_iterations, max_evaluations, intervals, compare)";
      return false;
    }
    if (!ok) return false;
  }
  *out = std::move(request);
  return true;
}

bool DecodeFitRequestText(const std::string& text, FitRequest* out, std::string* error) {
  Json document;
  if (!ParseJsonText(text, "request", &document, error)) return false;
  return DecodeFitRequest(document, out, error);
}

}  // namespace foothold
