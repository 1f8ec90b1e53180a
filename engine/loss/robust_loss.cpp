#include "engine/loss/robust_loss.h"

#include <algorithm>
#include <cmath>

namespace foothold {
namespace {

// Huber's k = 1.345 and the biweight's c = 4.685 give 95% efficiency at the normal; the Cauchy
// c = 2.3849 likewise (Holland & Welsch 1977, Table 1; values from memory).
constexpr double kHuberK = 1.345;
constexpr double kCauchyC = 2.3849;
constexpr double kTukeyC = 4.685;
constexpr double kDefaultCut = 3.0;
// 1 / Phi^{-1}(3/4): makes the MAD a consistent estimate of a normal standard deviation.
constexpr double kMadConsistency = 1.4826;

}  // namespace

const char* ToString(LossKind loss) {
  switch (loss) {
    case LossKind::kSquared:
      return "squared";
    case LossKind::kSoftL1:
      return "soft_l1";
    case LossKind::kHuber:
      return "huber";
    case LossKind::kCauchy:
      return "cauchy";
    case LossKind::kTukey:
      return "tukey";
    case LossKind::kL1:
      return "l1";
  }
  return "squared";
}

bool LossKindFromString(const std::string& text, LossKind* loss) {
  for (LossKind kind : {LossKind::kSquared, LossKind::kSoftL1, LossKind::kHuber, LossKind::kCauchy,
                        LossKind::kTukey, LossKind::kL1}) {
    if (text == ToString(kind)) {
      *loss = kind;
      return true;
    }
  }
  return false;
}

double LossTuningConstant(LossKind loss) {
  switch (loss) {
    case LossKind::kHuber:
      return kHuberK;
    case LossKind::kCauchy:
      return kCauchyC;
    case LossKind::kTukey:
      return kTukeyC;
    default:
      return 1.0;
  }
}

double OutlierCut(LossKind loss) { return loss == LossKind::kTukey ? kTukeyC : kDefaultCut; }

LossValue EvaluateLoss(LossKind loss, double z) {
  LossValue v;
  const double a = std::abs(z);
  switch (loss) {
    case LossKind::kSquared:
      v.rho = 0.5 * z * z;
      v.psi = z;
      v.dpsi = 1;
      v.weight = 1;
      break;
    case LossKind::kSoftL1: {
      const double root = std::sqrt(1 + z * z);
      v.rho = root - 1;
      v.psi = z / root;
      v.dpsi = 1 / (root * root * root);
      v.weight = 1 / root;
      break;
    }
    case LossKind::kHuber:
      if (a <= kHuberK) {
        v.rho = 0.5 * z * z;
        v.psi = z;
        v.dpsi = 1;
        v.weight = 1;
      } else {
        v.rho = kHuberK * a - 0.5 * kHuberK * kHuberK;
        v.psi = std::copysign(kHuberK, z);
        v.dpsi = 0;
        v.weight = kHuberK / a;
      }
      break;
    case LossKind::kCauchy: {
      const double u = z / kCauchyC;
      const double q = 1 + u * u;
      v.rho = 0.5 * kCauchyC * kCauchyC * std::log1p(u * u);
      v.psi = z / q;
      v.dpsi = (1 - u * u) / (q * q);
      v.weight = 1 / q;
      break;
    }
    case LossKind::kTukey: {
      const double c2 = kTukeyC * kTukeyC;
      if (a <= kTukeyC) {
        const double u2 = z * z / c2;
        const double t = 1 - u2;
        v.rho = c2 / 6 * (1 - t * t * t);
        v.psi = z * t * t;
        v.dpsi = t * (1 - 5 * u2);
        v.weight = t * t;
      } else {
        v.rho = c2 / 6;
        v.psi = 0;
        v.dpsi = 0;
        v.weight = 0;
      }
      break;
    }
    case LossKind::kL1:
      v.rho = a;
      v.psi = z > 0 ? 1 : (z < 0 ? -1 : 0);
      v.dpsi = 0;
      v.weight = 1 / std::max(a, kL1Floor);
      break;
  }
  return v;
}

double MadScale(const Eigen::VectorXd& residuals) {
  if (residuals.size() == 0) return 0;
  std::vector<double> a(residuals.size());
  for (int i = 0; i < residuals.size(); ++i) a[i] = std::abs(residuals[i]);
  const size_t mid = a.size() / 2;
  std::nth_element(a.begin(), a.begin() + mid, a.end());
  double median = a[mid];
  if (a.size() % 2 == 0) {
    const double below = *std::max_element(a.begin(), a.begin() + mid);
    median = 0.5 * (median + below);
  }
  return kMadConsistency * median;
}

double RobustObjective(LossKind loss, const Eigen::VectorXd& residuals, double scale) {
  double total = 0;
  for (int i = 0; i < residuals.size(); ++i) {
    total += EvaluateLoss(loss, residuals[i] / scale).rho;
  }
  return scale * scale * total;
}

std::vector<int> FlagOutliers(LossKind loss, const Eigen::VectorXd& residuals, double scale) {
  std::vector<int> flagged;
  const double cut = OutlierCut(loss);
  for (int i = 0; i < residuals.size(); ++i) {
    if (std::abs(residuals[i] / scale) > cut) flagged.push_back(i);
  }
  return flagged;
}

}  // namespace foothold
