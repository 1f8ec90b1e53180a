#pragma once
// The web page behind GET /: the recent fits, and with ?fit=ID one fit in full (its
// verdict, best parameters, plot, basins and start log). Plain HTML written on the server,
// no script, so any browser shows it and a person can read it without the API.

#include <string>

#include "server/jobs/job_record.h"

namespace foothold {

// The listing: one row a job, newest first, each linking to its page.
std::string RenderJobsPage(const JobPage& page);

// One fit. A queued or running job shows its progress and reloads itself every two
// seconds; a failed one its error; a done one everything its result document holds.
std::string RenderFitPage(const JobRecord& job);

}  // namespace foothold
