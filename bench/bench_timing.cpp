#include "bench_timing.h"

#include <time.h>

#include <algorithm>
#include <cstdio>

namespace foothold {
namespace bench {

double ThreadCpuSeconds() {
  timespec now;
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &now);
  return now.tv_sec + 1e-9 * now.tv_nsec;
}

double WallSeconds() {
  timespec now;
  clock_gettime(CLOCK_MONOTONIC, &now);
  return now.tv_sec + 1e-9 * now.tv_nsec;
}

double Median(std::vector<double> values) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  const size_t n = values.size();
  return n % 2 ? values[n / 2] : 0.5 * (values[n / 2 - 1] + values[n / 2]);
}

double LoadAverage() {
  std::FILE* file = std::fopen("/proc/loadavg", "r");
  if (!file) return -1;
  double load = -1;
  if (std::fscanf(file, "%lf", &load) != 1) load = -1;
  std::fclose(file);
  return load;
}

}  // namespace bench
}  // namespace foothold
