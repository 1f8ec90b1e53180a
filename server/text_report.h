#pragma once
// The report `foothold fit` prints for people: a parameter table and the statistics.

#include <ostream>
#include <string>

#include "server/fit_outcome.h"

namespace foothold {

// `source` names where the data came from (a path, or "request").
void WriteFitReport(const FitOutcome& outcome, const std::string& source, std::ostream& out);

// The catalogue as a table: name, parameters, formula.
void WriteFamiliesTable(std::ostream& out);

// "1.23457", "-4.2e-08", "n/a" for non-finite values.
std::string FormatSignificant(double value, int digits);

}  // namespace foothold
