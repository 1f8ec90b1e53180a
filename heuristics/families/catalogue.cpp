#include "heuristics/families/catalogue.h"

#include <algorithm>
#include <cctype>
#include <functional>
#include <limits>
#include <utility>

#include "engine/model/families/decay_models.h"
#include "engine/model/families/dose_response_models.h"
#include "engine/model/families/growth_models.h"
#include "engine/model/families/oscillation_models.h"
#include "engine/model/families/peak_models.h"
#include "engine/model/families/polynomial_models.h"

namespace foothold {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
// A suggestion is offered when the edit distance is at most this, or at most a third of
// the typed name's length.
constexpr int kSuggestionDistance = 2;
constexpr int kMinPrefixLength = 3;

using ModelFactory = std::function<std::unique_ptr<Model>(const FamilyRequest&)>;

// One row of the catalogue. Families with a degree or peak count build their parameter list
// per request; `peak_members` is then the template of one peak.
struct FamilyEntry {
  FamilyDescription description;
  ModelFactory make;
  std::vector<FamilyParameter> peak_members;  // multi_* only
};

FamilyDescription Describe(std::string name, std::string formula, std::string summary,
                           std::string guess_method, std::vector<FamilyParameter> parameters,
                           std::vector<std::string> options = {}, std::string symmetries = "") {
  FamilyDescription description;
  description.name = std::move(name);
  description.formula = std::move(formula);
  description.summary = std::move(summary);
  description.guess_method = std::move(guess_method);
  description.parameters = std::move(parameters);
  description.options = std::move(options);
  description.symmetries = std::move(symmetries);
  return description;
}

FamilyParameter Free(std::string name, std::string meaning) {
  return {std::move(name), std::move(meaning), -kInf, kInf};
}
FamilyParameter NonNegative(std::string name, std::string meaning) {
  return {std::move(name), std::move(meaning), 0.0, kInf};
}
FamilyParameter Between(std::string name, std::string meaning, double lower, double upper) {
  return {std::move(name), std::move(meaning), lower, upper};
}

std::vector<FamilyParameter> PolynomialParameters(int degree) {
  std::vector<FamilyParameter> parameters;
  for (int k = 0; k <= degree; ++k) {
    parameters.push_back(
        Free("c" + std::to_string(k), "coefficient of x^" + std::to_string(k) + " (y units)"));
  }
  return parameters;
}

std::vector<FamilyParameter> PeakParameters(const std::vector<FamilyParameter>& members,
                                            int num_peaks) {
  std::vector<FamilyParameter> parameters;
  for (int peak = 1; peak <= num_peaks; ++peak) {
    for (const FamilyParameter& member : members) {
      FamilyParameter p = member;
      p.name += std::to_string(peak);
      p.meaning += " of peak " + std::to_string(peak);
      parameters.push_back(std::move(p));
    }
  }
  parameters.push_back(Free("baseline", "constant offset under all peaks (y units)"));
  return parameters;
}

const std::vector<FamilyParameter> kGaussianPeak = {
    Free("height", "peak height above the baseline (y units; negative for a dip)"),
    Free("center", "peak position (x units)"),
    NonNegative("sigma", "standard deviation width, FWHM = 2*sqrt(2 ln 2)*sigma (x units)"),
};
const std::vector<FamilyParameter> kLorentzianPeak = {
    Free("height", "peak height above the baseline (y units; negative for a dip)"),
    Free("center", "peak position (x units)"),
    NonNegative("hwhm", "half width at half maximum, FWHM = 2*hwhm (x units)"),
};

std::vector<FamilyEntry> BuildEntries() {
  std::vector<FamilyEntry> entries;
  auto add = [&entries](FamilyDescription description, ModelFactory make,
                        std::vector<FamilyParameter> peak_members = {}) {
    entries.push_back({std::move(description), std::move(make), std::move(peak_members)});
  };

  add(Describe("line", "slope*x + intercept", "A straight line.",
               "ordinary linear least squares on (x, y): exact in one step",
               {Free("slope", "change of y per unit x"), Free("intercept", "value of y at x = 0")}),
      [](const FamilyRequest&) { return std::make_unique<LineModel>(); });

  add(Describe("polynomial", "c0 + c1*x + ... + cd*x^d",
               "A polynomial of the requested degree d (0..20, default 2).",
               "linear least squares on the powers of x: exact in one step",
               PolynomialParameters(2), {"degree"}),
      [](const FamilyRequest& r) { return std::make_unique<PolynomialModel>(r.degree); });

  add(Describe(
          "gaussian", "height*exp(-(x-center)^2/(2*sigma^2)) + baseline",
          "A single Gaussian peak on a constant baseline.",
          "baseline from a low quantile; height and center at the highest smoothed point; sigma "
          "from the half-height width (FWHM/2.3548), cross-checked by second moments",
          {kGaussianPeak[0], kGaussianPeak[1], kGaussianPeak[2],
           Free("baseline", "constant offset (y units)")}),
      [](const FamilyRequest&) { return std::make_unique<GaussianModel>(); });

  add(Describe(
          "lorentzian", "height*hwhm^2/((x-center)^2 + hwhm^2) + baseline",
          "A single Lorentzian (Cauchy) peak on a constant baseline.",
          "baseline from a low quantile; height and center at the highest smoothed point; hwhm "
          "as half the half-height width",
          {kLorentzianPeak[0], kLorentzianPeak[1], kLorentzianPeak[2],
           Free("baseline", "constant offset (y units)")}),
      [](const FamilyRequest&) { return std::make_unique<LorentzianModel>(); });

  add(Describe("pseudo_voigt",
               "height*(eta*L + (1-eta)*G) + baseline, G = exp(-4 ln2 (x-center)^2/fwhm^2), "
               "L = 1/(1 + 4 (x-center)^2/fwhm^2)",
               "A peak between Gaussian (eta = 0) and Lorentzian (eta = 1) sharing one FWHM.",
               "height, center and fwhm from the highest smoothed point and its half-height width; "
               "eta started at 0, 0.5 and 1",
               {Free("height", "peak height above the baseline (y units; negative for a dip)"),
                Free("center", "peak position (x units)"),
                NonNegative("fwhm", "full width at half maximum of both profiles (x units)"),
                Between("eta", "Lorentzian fraction: 0 Gaussian, 1 Lorentzian", 0.0, 1.0),
                Free("baseline", "constant offset (y units)")}),
      [](const FamilyRequest&) { return std::make_unique<PseudoVoigtModel>(); });

  const std::string peak_guess =
      "peaks from zero crossings of the Savitzky-Golay first derivative ranked by prominence "
      "(the k most prominent, or a count chosen from the data for auto); each peak's height, "
      "center and half-height width";
  add(
      Describe("multi_gaussian", "sum_i height_i*exp(-(x-center_i)^2/(2*sigma_i^2)) + baseline",
               "k Gaussian peaks (1..20, or auto) on one constant baseline.", peak_guess,
               PeakParameters(kGaussianPeak, 1), {"peaks"}),
      [](const FamilyRequest& r) { return std::make_unique<MultiGaussianModel>(r.peaks); },
      kGaussianPeak);

  add(
      Describe("multi_lorentzian", "sum_i height_i*hwhm_i^2/((x-center_i)^2 + hwhm_i^2) + baseline",
               "k Lorentzian peaks (1..20, or auto) on one constant baseline.", peak_guess,
               PeakParameters(kLorentzianPeak, 1), {"peaks"}),
      [](const FamilyRequest& r) { return std::make_unique<MultiLorentzianModel>(r.peaks); },
      kLorentzianPeak);

  add(Describe("exp_decay", "amplitude*exp(-x/tau) + baseline",
               "A single exponential relaxation towards a baseline.",
               "baseline from the tail; tau and amplitude from the log-linearisation "
               "ln(y - baseline) = ln(amplitude) - x/tau",
               {Free("amplitude", "value above the baseline at x = 0 (y units)"),
                NonNegative("tau", "lifetime, 1/e time (x units)"),
                Free("baseline", "level reached as x -> infinity (y units)")}),
      [](const FamilyRequest&) { return std::make_unique<ExpDecayModel>(); });

  add(Describe("biexp_decay", "amplitude1*exp(-x/tau1) + amplitude2*exp(-x/tau2) + baseline",
               "Two exponential relaxations (e.g. a fluorescence lifetime trace) on a baseline.",
               "Prony / matrix-pencil on evenly resampled data for the two rates; amplitudes and "
               "baseline by linear least squares",
               {Free("amplitude1", "amplitude of the first component at x = 0 (y units)"),
                NonNegative("tau1", "lifetime of the first component (x units)"),
                Free("amplitude2", "amplitude of the second component at x = 0 (y units)"),
                NonNegative("tau2", "lifetime of the second component (x units)"),
                Free("baseline", "level reached as x -> infinity (y units)")},
               {},
               "(amplitude1, tau1) and (amplitude2, tau2) may be swapped; canonical order by tau"),
      [](const FamilyRequest&) { return std::make_unique<BiexpDecayModel>(); });

  add(Describe("stretched_exp", "amplitude*exp(-(x/tau)^beta) + baseline",
               "A Kohlrausch relaxation (beta < 1 stretched, beta > 1 compressed), x >= 0.",
               "baseline from the tail, amplitude from the first points; ln(-ln((y-baseline)/"
               "amplitude)) against ln x is a line of slope beta and intercept -beta*ln(tau)",
               {Free("amplitude", "value above the baseline at x = 0 (y units)"),
                NonNegative("tau", "characteristic time (x units)"),
                NonNegative("beta", "stretching exponent; 1 is a plain exponential"),
                Free("baseline", "level reached as x -> infinity (y units)")}),
      [](const FamilyRequest&) { return std::make_unique<StretchedExpModel>(); });

  add(Describe(
          "logistic4", "bottom + (top-bottom)/(1 + 10^((log_ec50 - x)*hill))",
          "A four-parameter dose-response curve; x is log10 of the concentration.",
          "bottom and top from the low and high ends; log_ec50 where the curve crosses the "
          "midpoint; hill from the logit-linearisation near it (sign from the trend)",
          {Free("bottom", "response plateau as hill*x -> -infinity (y units)"),
           Free("top", "response plateau as hill*x -> +infinity (y units)"),
           Free("log_ec50", "log10 concentration of the half-maximal response"),
           Free("hill", "slope factor; negative for inhibition curves")},
          {},
          "(bottom, top, hill) and (top, bottom, -hill) give the same curve (not a permutation)"),
      [](const FamilyRequest&) { return std::make_unique<Logistic4Model>(); });

  add(Describe("logistic5", "bottom + (top-bottom)/(1 + 10^((log_ec50 - x)*hill))^asymmetry",
               "An asymmetric five-parameter dose-response curve; x is log10 of the concentration.",
               "the logistic4 guess with asymmetry started at 1 and at values either side",
               {Free("bottom", "response plateau as hill*x -> -infinity (y units)"),
                Free("top", "response plateau as hill*x -> +infinity (y units)"),
                Free("log_ec50", "log10 concentration of the inflection for asymmetry = 1"),
                Free("hill", "slope factor; negative for inhibition curves"),
                NonNegative("asymmetry", "asymmetry exponent; 1 gives logistic4")}),
      [](const FamilyRequest&) { return std::make_unique<Logistic5Model>(); });

  add(Describe("michaelis_menten", "vmax*x/(km + x)",
               "Enzyme rate against substrate concentration x >= 0.",
               "Hanes-Woolf linearisation x/y = km/vmax + x/vmax solved as weighted linear least "
               "squares",
               {NonNegative("vmax", "limiting rate at saturating x (y units)"),
                NonNegative("km", "concentration of half-maximal rate (x units)")}),
      [](const FamilyRequest&) { return std::make_unique<MichaelisMentenModel>(); });

  add(Describe(
          "hill_binding", "bmax*x^n/(kd^n + x^n)",
          "Cooperative binding against ligand concentration x >= 0.",
          "bmax from the upper plateau; the Hill plot ln(y/(bmax-y)) = n*ln(x) - n*ln(kd) is a "
          "line giving n and kd",
          {NonNegative("bmax", "binding at saturation (y units)"),
           NonNegative("kd", "concentration of half-maximal binding (x units)"),
           NonNegative("n", "Hill coefficient; > 1 positive, < 1 negative cooperativity")}),
      [](const FamilyRequest&) { return std::make_unique<HillBindingModel>(); });

  add(Describe(
          "power_law", "prefactor*x^exponent", "A scaling law, x > 0.",
          "log-log linearisation ln|y| = ln|prefactor| + exponent*ln(x) on points with x > 0 "
          "and y != 0",
          {Free("prefactor", "value at x = 1 (y units)"), Free("exponent", "scaling exponent")}),
      [](const FamilyRequest&) { return std::make_unique<PowerLawModel>(); });

  add(Describe(
          "sine", "amplitude*sin(2*pi*frequency*x + phase) + baseline", "A steady oscillation.",
          "Lomb-Scargle periodogram peak for the frequency; amplitude, phase and baseline from "
          "the linear fit of sin and cos at that frequency",
          {Free("amplitude", "half the peak-to-peak swing (y units; sign trades with phase)"),
           NonNegative("frequency", "cycles per unit x"), Free("phase", "phase at x = 0 (radians)"),
           Free("baseline", "mean level (y units)")},
          {}, "phase + 2*pi and (-amplitude, phase + pi) give the same curve (not a permutation)"),
      [](const FamilyRequest&) { return std::make_unique<SineModel>(); });

  add(Describe(
          "damped_sine", "amplitude*exp(-x/tau)*sin(2*pi*frequency*x + phase) + baseline",
          "An exponentially decaying oscillation (e.g. a ring-down).",
          "Lomb-Scargle periodogram peak for the frequency; tau from the log-linear decay of "
          "the local extrema's distance from the baseline",
          {Free("amplitude", "envelope at x = 0 (y units; sign trades with phase)"),
           NonNegative("tau", "envelope 1/e decay time (x units)"),
           NonNegative("frequency", "cycles per unit x"), Free("phase", "phase at x = 0 (radians)"),
           Free("baseline", "level the oscillation decays to (y units)")},
          {}, "phase + 2*pi and (-amplitude, phase + pi) give the same curve (not a permutation)"),
      [](const FamilyRequest&) { return std::make_unique<DampedSineModel>(); });

  add(Describe(
          "gompertz", "asymptote*exp(-exp(displacement - rate*x))",
          "An asymmetric sigmoidal growth curve.",
          "asymptote from the upper plateau; ln(-ln(y/asymptote)) = displacement - rate*x is a "
          "line",
          {Free("asymptote", "upper plateau as x -> infinity (y units)"),
           Free("displacement", "shift along x: the inflection is at x = displacement/rate"),
           NonNegative("rate", "growth rate (per unit x)")}),
      [](const FamilyRequest&) { return std::make_unique<GompertzModel>(); });

  add(Describe(
          "arrhenius", "prefactor*exp(-ea/(R*x)), R = 8.314462618 J/(mol K)",
          "A thermally activated rate; x is the absolute temperature in K (> 0).",
          "ln y against 1/x is a line: slope -ea/R, intercept ln(prefactor)",
          {NonNegative("prefactor", "pre-exponential factor, the rate as x -> infinity (y units)"),
           NonNegative("ea", "activation energy (J/mol)")}),
      [](const FamilyRequest&) { return std::make_unique<ArrheniusModel>(); });

  // Linear parameters come from the models themselves (default options).
  for (FamilyEntry& entry : entries) {
    FamilyRequest request;
    request.name = entry.description.name;
    const std::unique_ptr<Model> model = entry.make(request);
    const std::vector<std::string>& names = model->ParameterNames();
    for (int j : model->LinearParameters()) {
      entry.description.linear_parameters.push_back(names[j]);
    }
    if (!entry.peak_members.empty()) {
      entry.description.symmetries = "peaks may be permuted; canonical order by center";
    }
  }
  return entries;
}

const std::vector<FamilyEntry>& Entries() {
  static const std::vector<FamilyEntry> kEntries = BuildEntries();
  return kEntries;
}

const FamilyEntry* FindEntry(const std::string& name) {
  for (const FamilyEntry& entry : Entries()) {
    if (entry.description.name == name) return &entry;
  }
  return nullptr;
}

std::string Lowercase(std::string text) {
  for (char& c : text) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return text;
}

// Levenshtein distance by the two-row dynamic programme.
int EditDistance(const std::string& a, const std::string& b) {
  std::vector<int> previous(b.size() + 1);
  std::vector<int> current(b.size() + 1);
  for (size_t j = 0; j <= b.size(); ++j) previous[j] = static_cast<int>(j);
  for (size_t i = 1; i <= a.size(); ++i) {
    current[0] = static_cast<int>(i);
    for (size_t j = 1; j <= b.size(); ++j) {
      const int substitution = previous[j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1);
      current[j] = std::min({previous[j] + 1, current[j - 1] + 1, substitution});
    }
    std::swap(previous, current);
  }
  return previous[b.size()];
}

// The closest family name, or "" when none is close: a small edit distance (case folded,
// '-' and ' ' read as '_'), or the typed text being the start of exactly one name.
std::string SuggestName(const std::string& typed) {
  std::string folded = Lowercase(typed);
  std::replace(folded.begin(), folded.end(), '-', '_');
  std::replace(folded.begin(), folded.end(), ' ', '_');
  const int limit = std::max(kSuggestionDistance, static_cast<int>(folded.size()) / 3);
  std::string best;
  int best_distance = limit + 1;
  std::string prefix_match;
  int num_prefix_matches = 0;
  for (const FamilyEntry& entry : Entries()) {
    const std::string& name = entry.description.name;
    const int distance = EditDistance(folded, name);
    if (distance < best_distance) {
      best_distance = distance;
      best = name;
    }
    if (folded.size() >= static_cast<size_t>(kMinPrefixLength) && name.rfind(folded, 0) == 0) {
      prefix_match = name;
      ++num_prefix_matches;
    }
  }
  if (!best.empty()) return best;
  return num_prefix_matches == 1 ? prefix_match : std::string();
}

std::string FamilyList() {
  std::string list;
  for (const FamilyEntry& entry : Entries()) {
    if (!list.empty()) list += ", ";
    list += entry.description.name;
  }
  return list;
}

bool Fail(std::string* error, std::string message) {
  if (error != nullptr) *error = std::move(message);
  return false;
}

bool HasOption(const FamilyDescription& description, const std::string& option) {
  return std::find(description.options.begin(), description.options.end(), option) !=
         description.options.end();
}

// Checks degree and peaks against the family's options. Options the family does not take
// must keep their defaults (a changed value means the caller meant a different family).
bool ValidateOptions(const FamilyRequest& request, const FamilyDescription& description,
                     std::string* error) {
  const FamilyRequest defaults;
  const std::string& name = description.name;
  if (HasOption(description, "degree")) {
    if (request.degree < PolynomialModel::kMinDegree ||
        request.degree > PolynomialModel::kMaxDegree) {
      return Fail(error, "degree = " + std::to_string(request.degree) + ": must be between " +
                             std::to_string(PolynomialModel::kMinDegree) + " and " +
                             std::to_string(PolynomialModel::kMaxDegree));
    }
  } else if (request.degree != defaults.degree) {
    return Fail(error, "degree = " + std::to_string(request.degree) + ": family '" + name +
                           "' takes no degree option (only polynomial does)");
  }
  if (HasOption(description, "peaks")) {
    if (request.auto_peaks) {
      return Fail(error, "peaks = auto: family '" + name +
                             "' needs the data to choose the peak count; resolve it from the "
                             "dataset first, then instantiate with a number of peaks");
    }
    if (request.peaks < kMinPeaks || request.peaks > kMaxPeaks) {
      return Fail(error, "peaks = " + std::to_string(request.peaks) + ": must be between " +
                             std::to_string(kMinPeaks) + " and " + std::to_string(kMaxPeaks));
    }
  } else if (request.auto_peaks || request.peaks != defaults.peaks) {
    const std::string value = request.auto_peaks ? "auto" : std::to_string(request.peaks);
    return Fail(error, "peaks = " + value + ": family '" + name +
                           "' takes no peaks option (only multi_gaussian and multi_lorentzian "
                           "do)");
  }
  return true;
}

}  // namespace

const std::vector<FamilyDescription>& FamilyCatalogue() {
  static const std::vector<FamilyDescription> kCatalogue = [] {
    std::vector<FamilyDescription> catalogue;
    for (const FamilyEntry& entry : Entries()) catalogue.push_back(entry.description);
    return catalogue;
  }();
  return kCatalogue;
}

const FamilyDescription* FindFamily(const std::string& name) {
  for (const FamilyDescription& description : FamilyCatalogue()) {
    if (description.name == name) return &description;
  }
  return nullptr;
}

bool InstantiateFamily(const FamilyRequest& request, FamilyInstance* out, std::string* error) {
  if (request.name.empty()) {
    return Fail(error, "family: name is empty; expected one of " + FamilyList());
  }
  const FamilyEntry* entry = FindEntry(request.name);
  if (entry == nullptr) {
    const std::string suggestion = SuggestName(request.name);
    if (!suggestion.empty()) {
      return Fail(error,
                  "unknown family '" + request.name + "' (did you mean '" + suggestion + "'?)");
    }
    return Fail(error, "unknown family '" + request.name + "': expected one of " + FamilyList());
  }
  if (!ValidateOptions(request, entry->description, error)) return false;

  FamilyInstance instance;
  instance.model = entry->make(request);
  if (HasOption(entry->description, "degree")) {
    instance.parameters = PolynomialParameters(request.degree);
  } else if (HasOption(entry->description, "peaks")) {
    instance.parameters = PeakParameters(entry->peak_members, request.peaks);
  } else {
    instance.parameters = entry->description.parameters;
  }
  *out = std::move(instance);
  return true;
}

}  // namespace foothold
