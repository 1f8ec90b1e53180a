#include "server/job_codec.h"

#include <cmath>
#include <cstdio>
#include <ctime>
#include <map>
#include <regex>

namespace foothold {
namespace {

Json Time(std::int64_t ms) { return ms > 0 ? Json(FormatRfc3339(ms)) : Json(nullptr); }

Json Number(double value) { return std::isfinite(value) ? Json(value) : Json(nullptr); }

}  // namespace

std::string FormatRfc3339(std::int64_t ms) {
  const std::time_t seconds = static_cast<std::time_t>(ms / 1000);
  std::tm utc{};
  gmtime_r(&seconds, &utc);
  char text[40];
  std::snprintf(text, sizeof(text), "%04d-%02d-%02dT%02d:%02d:%02d.%03dZ", utc.tm_year + 1900,
                utc.tm_mon + 1, utc.tm_mday, utc.tm_hour, utc.tm_min, utc.tm_sec,
                static_cast<int>(ms % 1000));
  return text;
}

bool ParseRfc3339(const std::string& text, std::int64_t* ms) {
  static const std::regex kTime(
      R"(^(\d{4})-(\d{2})-(\d{2})[Tt](\d{2}):(\d{2}):(\d{2})(\.\d{1,9})?([Zz]|[+-]\d{2}:\d{2})$)");
  std::smatch match;
  if (!std::regex_match(text, match, kTime)) return false;
  std::tm utc{};
  utc.tm_year = std::stoi(match[1]) - 1900;
  utc.tm_mon = std::stoi(match[2]) - 1;
  utc.tm_mday = std::stoi(match[3]);
  utc.tm_hour = std::stoi(match[4]);
  utc.tm_min = std::stoi(match[5]);
  utc.tm_sec = std::stoi(match[6]);
  if (utc.tm_mon > 11 || utc.tm_mday < 1 || utc.tm_mday > 31 || utc.tm_hour > 23 ||
      utc.tm_min > 59 || utc.tm_sec > 60) {
    return false;
  }
  std::int64_t value = static_cast<std::int64_t>(timegm(&utc)) * 1000;
  if (match[7].matched) value += static_cast<std::int64_t>(std::stod("0" + match[7].str()) * 1000);
  const std::string zone = match[8];
  if (zone.size() == 6) {
    const int offset_minutes = std::stoi(zone.substr(1, 2)) * 60 + std::stoi(zone.substr(4, 2));
    value -= (zone[0] == '-' ? -1 : 1) * static_cast<std::int64_t>(offset_minutes) * 60000;
  }
  *ms = value;
  return true;
}

Json EncodeJobLinks(const std::string& id) {
  const std::string self = "/v1/fits/" + id;
  Json links = Json::object();
  links["self"] = self;
  links["starts"] = self + "/starts";
  links["basins"] = self + "/basins";
  links["plot"] = self + "/plot.svg";
  links["basins_plot"] = self + "/basins.svg";
  return links;
}

Json EncodeJob(const JobRecord& job, bool with_result) {
  Json out = Json::object();
  out["id"] = job.id;
  out["state"] = ToString(job.state);
  out["label"] = job.label;
  if (!job.batch_id.empty()) out["batch_id"] = job.batch_id;
  out["created"] = Time(job.created_ms);
  out["started"] = Time(job.started_ms);
  out["finished"] = Time(job.finished_ms);
  Json progress = Json::object();
  progress["starts_finished"] = job.progress.starts_finished;
  progress["starts_planned"] = job.progress.starts_planned;
  progress["best_rss"] =
      job.progress.starts_finished > 0 ? Number(job.progress.best_rss) : Json(nullptr);
  out["progress"] = progress;
  out["attempts"] = job.attempts;
  if (job.cancel_requested && !IsFinished(job.state)) out["cancel_requested"] = true;
  if (!job.error.empty()) out["error"] = job.error;
  out["links"] = EncodeJobLinks(job.id);
  if (with_result && !job.result_json.empty()) {
    out["result"] = Json::parse(job.result_json, nullptr, false);
  }
  return out;
}

Json EncodeJobPage(const JobPage& page, const std::string& next_link) {
  Json out = Json::object();
  Json jobs = Json::array();
  for (const JobRecord& job : page.jobs) jobs.push_back(EncodeJob(job, false));
  out["jobs"] = jobs;
  out["next_cursor"] = page.next_cursor > 0 ? Json(std::to_string(page.next_cursor)) : Json();
  Json links = Json::object();
  links["next"] = page.next_cursor > 0 ? Json(next_link) : Json();
  out["links"] = links;
  return out;
}

Json EncodeBatch(const BatchRecord& batch) {
  Json out = Json::object();
  out["id"] = batch.id;
  out["created"] = Time(batch.created_ms);
  std::map<JobState, int> counts;
  for (JobState state : kAllJobStates) counts[state] = 0;
  Json jobs = Json::array();
  for (const JobRecord& job : batch.jobs) {
    counts[job.state]++;
    Json entry = Json::object();
    entry["id"] = job.id;
    entry["state"] = ToString(job.state);
    entry["label"] = job.label;
    entry["best_rss"] =
        job.progress.starts_finished > 0 ? Number(job.progress.best_rss) : Json(nullptr);
    entry["links"] = Json{{"self", "/v1/fits/" + job.id}};
    jobs.push_back(entry);
  }
  Json count_json = Json::object();
  for (JobState state : kAllJobStates) count_json[ToString(state)] = counts[state];
  out["total"] = batch.jobs.size();
  out["counts"] = count_json;
  out["jobs"] = jobs;
  return out;
}

Json EncodeBatchAccepted(const std::string& batch_id, const std::vector<std::string>& ids,
                         const std::vector<NewJob>& jobs) {
  Json out = Json::object();
  out["id"] = batch_id;
  out["state"] = "queued";
  Json entries = Json::array();
  for (size_t i = 0; i < ids.size(); ++i) {
    Json entry = Json::object();
    entry["id"] = ids[i];
    entry["label"] = jobs[i].label;
    entry["links"] = EncodeJobLinks(ids[i]);
    entries.push_back(entry);
  }
  out["jobs"] = entries;
  out["links"] = Json{{"self", "/v1/batches/" + batch_id}};
  return out;
}

Json EncodeGuesses(const PreparedFit& prepared) {
  Json out = Json::object();
  Json start = Json::object();
  const std::vector<std::string>& names = prepared.model->ParameterNames();
  for (size_t i = 0; i < names.size(); ++i) {
    start[names[i]] = Number(prepared.start[static_cast<Eigen::Index>(i)]);
  }
  out["start"] = start;
  out["origin"] = prepared.start_origin;
  out["guessed"] = prepared.guessed;
  out["warnings"] = prepared.warnings;
  Json model = Json::object();
  if (prepared.model_spec.IsFamily()) {
    model["family"] = prepared.model_spec.family;
    if (prepared.model_spec.peaks) model["peaks"] = *prepared.model_spec.peaks;
    if (prepared.model_spec.degree) model["degree"] = *prepared.model_spec.degree;
  } else {
    model["expression"] = prepared.model_spec.expression;
    model["parameters"] = names;
  }
  out["model"] = model;
  return out;
}

Json ResultMember(const std::string& result_json, const std::string& member) {
  if (result_json.empty()) return Json();
  Json result = Json::parse(result_json, nullptr, false);
  if (!result.is_object() || !result.contains(member)) return Json();
  return result[member];
}

bool DecodeBatchRequest(const std::string& text, std::vector<FitRequest>* requests,
                        std::vector<NewJob>* jobs, std::string* error) {
  Json document;
  if (!ParseJsonText(text, "batch", &document, error)) return false;
  if (!document.is_object()) {
    *error = "batch: expected a JSON object";
    return false;
  }
  if (!document.contains("datasets") || !document["datasets"].is_array() ||
      document["datasets"].empty()) {
    *error = "datasets: expected a non-empty array of {\"label\", \"data\"} objects";
    return false;
  }
  for (const char* key : {"data", "label"}) {
    if (document.contains(key)) {
      *error = std::string(key) + ": not allowed at the top of a batch; give it per dataset";
      return false;
    }
  }
  Json common = document;
  common.erase("datasets");
  const Json& datasets = document["datasets"];
  requests->clear();
  jobs->clear();
  for (size_t i = 0; i < datasets.size(); ++i) {
    const std::string where = "datasets[" + std::to_string(i) + "]";
    const Json& entry = datasets[i];
    if (!entry.is_object() || !entry.contains("data")) {
      *error = where + ": expected an object with \"data\" (and optional \"label\")";
      return false;
    }
    for (auto it = entry.begin(); it != entry.end(); ++it) {
      if (it.key() != "data" && it.key() != "label") {
        *error = where + "." + it.key() + ": unknown field (expected data, label)";
        return false;
      }
    }
    Json merged = common;
    merged["data"] = entry["data"];
    if (entry.contains("label")) merged["label"] = entry["label"];
    FitRequest request;
    std::string decode_error;
    if (!DecodeFitRequest(merged, &request, &decode_error)) {
      const bool names_data =
          decode_error.rfind("data", 0) == 0 || decode_error.rfind("label", 0) == 0;
      *error = names_data ? where + "." + decode_error : decode_error;
      return false;
    }
    jobs->push_back({request.label, merged.dump()});
    requests->push_back(std::move(request));
  }
  return true;
}

}  // namespace foothold
