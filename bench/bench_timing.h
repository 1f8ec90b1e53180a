#pragma once
// Clocks and statistics for the plain benchmark harness.

#include <vector>

namespace foothold {
namespace bench {

// Processor time of the calling thread: on a loaded machine it excludes the time the
// thread waits for a core, which wall time would count.
double ThreadCpuSeconds();
double WallSeconds();
double Median(std::vector<double> values);
// Load average over the last minute (from /proc/loadavg), or -1.
double LoadAverage();

}  // namespace bench
}  // namespace foothold
