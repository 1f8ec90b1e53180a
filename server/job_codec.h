#pragma once
// JSON of the daemon's own documents: jobs, job listings, batches, guesses, and the batch
// request. The fit request and result documents stay in json_codec.h.

#include <cstdint>
#include <string>
#include <vector>

#include "server/fit_service.h"
#include "server/jobs/job_record.h"
#include "server/json_codec.h"

namespace foothold {

// Milliseconds since the epoch as RFC 3339 UTC ("2026-12-02T01:02:03.456Z").
std::string FormatRfc3339(std::int64_t ms);
// "2026-12-02T01:02:03Z", with optional fraction and a Z or ±hh:mm offset.
bool ParseRfc3339(const std::string& text, std::int64_t* ms);

// The links of a job: self, starts, basins, plot, basins_plot.
Json EncodeJobLinks(const std::string& id);
// State, times, progress, links; the result document under "result" when with_result and
// the job is done or cancelled with a result.
Json EncodeJob(const JobRecord& job, bool with_result);
// {"jobs": [...], "next_cursor": "..." | null, "links": {"next": ...}}.
Json EncodeJobPage(const JobPage& page, const std::string& next_link);
// Counts by state and each job's id, state, label and best rss.
Json EncodeBatch(const BatchRecord& batch);
// {"id": batch id, "state": "queued", "jobs": [{"id", "label", "links"}]}.
Json EncodeBatchAccepted(const std::string& batch_id, const std::vector<std::string>& ids,
                         const std::vector<NewJob>& jobs);
// The starting guesses: parameter -> value, origin, which were guessed, warnings.
Json EncodeGuesses(const PreparedFit& prepared);
// One top-level member of a stored result document ("starts", "basins"); null if absent.
Json ResultMember(const std::string& result_json, const std::string& member);

// A batch request: the request document without "data" and "label", plus "datasets": a
// non-empty array of {"label": optional, "data": {...}}. Fills one request (and its stored
// document) per dataset; messages name the index ("datasets[2].data.y[4]: ...").
bool DecodeBatchRequest(const std::string& text, std::vector<FitRequest>* requests,
                        std::vector<NewJob>* jobs, std::string* error);

}  // namespace foothold
