#include "reference_solvers.h"

#include <ceres/ceres.h>
#include <cminpack.h>
#include <gsl/gsl_blas.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_multifit_nlinear.h>

#include <Eigen/Core>
#include <cmath>
#include <unsupported/Eigen/LevenbergMarquardt>

namespace foothold {
namespace bench {

void Residuals(const BenchProblem& problem, const double* p, double* f) {
  const int n = static_cast<int>(problem.x.size());
  const double* x = problem.x.data();
  const double* y = problem.y.data();
  switch (problem.shape) {
    case Shape::kGaussian:
      for (int i = 0; i < n; ++i) {
        const double u = (x[i] - p[1]) / p[2];
        f[i] = p[0] * std::exp(-0.5 * u * u) - y[i];
      }
      break;
    case Shape::kThreeGaussians:
      for (int i = 0; i < n; ++i) {
        double sum = p[9];
        for (int k = 0; k < 3; ++k) {
          const double u = (x[i] - p[3 * k + 1]) / p[3 * k + 2];
          sum += p[3 * k] * std::exp(-0.5 * u * u);
        }
        f[i] = sum - y[i];
      }
      break;
    case Shape::kBiexp:
      for (int i = 0; i < n; ++i) {
        f[i] = p[0] * std::exp(-x[i] / p[1]) + p[2] * std::exp(-x[i] / p[3]) + p[4] - y[i];
      }
      break;
  }
}

void Jacobian(const BenchProblem& problem, const double* p, double* jacobian, int ld,
              bool row_major) {
  const int n = static_cast<int>(problem.x.size());
  const double* x = problem.x.data();
  auto at = [&](int i, int j) -> double& {
    return row_major ? jacobian[static_cast<long>(i) * ld + j]
                     : jacobian[static_cast<long>(j) * ld + i];
  };
  switch (problem.shape) {
    case Shape::kGaussian:
    case Shape::kThreeGaussians: {
      const int peaks = problem.shape == Shape::kGaussian ? 1 : 3;
      for (int i = 0; i < n; ++i) {
        for (int k = 0; k < peaks; ++k) {
          const double h = p[3 * k], s = p[3 * k + 2];
          const double u = (x[i] - p[3 * k + 1]) / s;
          const double e = std::exp(-0.5 * u * u);
          at(i, 3 * k) = e;
          at(i, 3 * k + 1) = h * e * u / s;
          at(i, 3 * k + 2) = h * e * u * u / s;
        }
        if (peaks == 3) at(i, 9) = 1.0;
      }
      break;
    }
    case Shape::kBiexp:
      for (int i = 0; i < n; ++i) {
        const double e1 = std::exp(-x[i] / p[1]);
        const double e2 = std::exp(-x[i] / p[3]);
        at(i, 0) = e1;
        at(i, 1) = p[0] * e1 * x[i] / (p[1] * p[1]);
        at(i, 2) = e2;
        at(i, 3) = p[2] * e2 * x[i] / (p[3] * p[3]);
        at(i, 4) = 1.0;
      }
      break;
  }
}

namespace {

double SumOfSquares(const double* f, int n) {
  double sum = 0;
  for (int i = 0; i < n; ++i) sum += f[i] * f[i];
  return sum;
}

// ---- MINPACK (CMinpack lmder) ----

class MinpackSolver : public Solver {
 public:
  explicit MinpackSolver(const BenchProblem& problem)
      : problem_(problem),
        n_(static_cast<int>(problem.x.size())),
        p_(NumParameters(problem.shape)),
        fvec_(n_),
        fjac_(static_cast<size_t>(n_) * p_),
        diag_(p_),
        qtf_(p_),
        wa1_(p_),
        wa2_(p_),
        wa3_(p_),
        wa4_(n_),
        ipvt_(p_) {}
  const char* Name() const override { return "minpack"; }

  FitResult Fit() override {
    FitResult result;
    result.parameters = problem_.start;
    int nfev = 0, njev = 0;
    const int info =
        lmder(&Callback, this, n_, p_, result.parameters.data(), fvec_.data(), fjac_.data(), n_,
              kTolerance, kTolerance, 0.0, 200 * (p_ + 1), diag_.data(), 1, 100.0, 0, &nfev, &njev,
              ipvt_.data(), qtf_.data(), wa1_.data(), wa2_.data(), wa3_.data(), wa4_.data());
    result.rss = SumOfSquares(fvec_.data(), n_);
    result.iterations = njev;
    result.evaluations = nfev;
    result.jacobian_evaluations = njev;
    result.status = "info " + std::to_string(info);
    return result;
  }

 private:
  static int Callback(void* self, int m, int n, const double* x, double* fvec, double* fjac,
                      int ldfjac, int iflag) {
    const auto* solver = static_cast<MinpackSolver*>(self);
    if (iflag == 1) Residuals(solver->problem_, x, fvec);
    if (iflag == 2) Jacobian(solver->problem_, x, fjac, ldfjac, false);
    return 0;
  }

  const BenchProblem& problem_;
  int n_, p_;
  std::vector<double> fvec_, fjac_, diag_, qtf_, wa1_, wa2_, wa3_, wa4_;
  std::vector<int> ipvt_;
};

// ---- Eigen unsupported LevenbergMarquardt ----

struct EigenFunctor : Eigen::DenseFunctor<double> {
  EigenFunctor(const BenchProblem& problem)
      : Eigen::DenseFunctor<double>(NumParameters(problem.shape),
                                    static_cast<int>(problem.x.size())),
        problem(problem) {}
  int operator()(const InputType& x, ValueType& fvec) const {
    Residuals(problem, x.data(), fvec.data());
    return 0;
  }
  int df(const InputType& x, JacobianType& fjac) const {
    Jacobian(problem, x.data(), fjac.data(), static_cast<int>(fjac.rows()), false);
    return 0;
  }
  const BenchProblem& problem;
};

class EigenLmSolver : public Solver {
 public:
  explicit EigenLmSolver(const BenchProblem& problem) : problem_(problem), functor_(problem) {}
  const char* Name() const override { return "eigen_lm"; }

  FitResult Fit() override {
    Eigen::VectorXd x =
        Eigen::Map<const Eigen::VectorXd>(problem_.start.data(), problem_.start.size());
    Eigen::LevenbergMarquardt<EigenFunctor> lm(functor_);
    lm.setFtol(kTolerance);
    lm.setXtol(kTolerance);
    lm.setGtol(0.0);
    lm.setMaxfev(200 * (static_cast<int>(x.size()) + 1));
    const int info = lm.minimize(x);
    FitResult result;
    result.parameters.assign(x.data(), x.data() + x.size());
    result.rss = lm.fnorm() * lm.fnorm();
    result.iterations = static_cast<int>(lm.iterations());
    result.evaluations = static_cast<int>(lm.nfev());
    result.jacobian_evaluations = static_cast<int>(lm.njev());
    result.status = "info " + std::to_string(info);
    return result;
  }

 private:
  const BenchProblem& problem_;
  EigenFunctor functor_;
};

// ---- Ceres Solver ----

template <typename T>
T PointValue(Shape shape, double x, const T* p) {
  using std::exp;
  switch (shape) {
    case Shape::kGaussian: {
      const T u = (x - p[1]) / p[2];
      return p[0] * exp(-0.5 * u * u);
    }
    case Shape::kThreeGaussians: {
      T sum = p[9];
      for (int k = 0; k < 3; ++k) {
        const T u = (x - p[3 * k + 1]) / p[3 * k + 2];
        sum += p[3 * k] * exp(-0.5 * u * u);
      }
      return sum;
    }
    case Shape::kBiexp:
      return p[0] * exp(-x / p[1]) + p[2] * exp(-x / p[3]) + p[4];
  }
  return T(0);
}

struct PointResidual {
  template <typename T>
  bool operator()(const T* p, T* r) const {
    r[0] = PointValue(shape, x, p) - y;
    return true;
  }
  Shape shape;
  double x, y;
};

struct BlockResidual {
  template <typename T>
  bool operator()(const T* p, T* r) const {
    const size_t n = problem->x.size();
    for (size_t i = 0; i < n; ++i)
      r[i] = PointValue(problem->shape, problem->x[i], p) - problem->y[i];
    return true;
  }
  const BenchProblem* problem;
};

template <int kP>
void AddResiduals(const BenchProblem& problem, bool one_block_per_point, double* parameters,
                  ceres::Problem* ceres_problem) {
  if (one_block_per_point) {
    for (size_t i = 0; i < problem.x.size(); ++i) {
      ceres_problem->AddResidualBlock(
          new ceres::AutoDiffCostFunction<PointResidual, 1, kP>(
              new PointResidual{problem.shape, problem.x[i], problem.y[i]}),
          nullptr, parameters);
    }
  } else {
    ceres_problem->AddResidualBlock(
        new ceres::AutoDiffCostFunction<BlockResidual, ceres::DYNAMIC, kP>(
            new BlockResidual{&problem}, static_cast<int>(problem.x.size())),
        nullptr, parameters);
  }
}

class CeresSolver : public Solver {
 public:
  CeresSolver(const BenchProblem& problem, bool one_block_per_point)
      : problem_(problem), one_block_per_point_(one_block_per_point), parameters_(problem.start) {
    switch (NumParameters(problem.shape)) {
      case 3:
        AddResiduals<3>(problem, one_block_per_point, parameters_.data(), &ceres_problem_);
        break;
      case 5:
        AddResiduals<5>(problem, one_block_per_point, parameters_.data(), &ceres_problem_);
        break;
      case 10:
        AddResiduals<10>(problem, one_block_per_point, parameters_.data(), &ceres_problem_);
        break;
    }
    options_.minimizer_type = ceres::TRUST_REGION;
    options_.trust_region_strategy_type = ceres::LEVENBERG_MARQUARDT;
    options_.linear_solver_type = ceres::DENSE_QR;
    options_.max_num_iterations = 1000;
    options_.function_tolerance = kTolerance;
    options_.parameter_tolerance = kTolerance;
    options_.gradient_tolerance = 1e-20;
    options_.num_threads = 1;
    options_.logging_type = ceres::SILENT;
    options_.minimizer_progress_to_stdout = false;
  }
  const char* Name() const override { return one_block_per_point_ ? "ceres_point" : "ceres_block"; }

  FitResult Fit() override {
    parameters_ = problem_.start;  // same storage: the problem keeps the pointer
    ceres::Solver::Summary summary;
    ceres::Solve(options_, &ceres_problem_, &summary);
    FitResult result;
    result.parameters = parameters_;
    result.rss = 2 * summary.final_cost;
    result.iterations = static_cast<int>(summary.iterations.size()) - 1;
    result.evaluations = summary.num_residual_evaluations;
    result.jacobian_evaluations = summary.num_jacobian_evaluations;
    result.status = ceres::TerminationTypeToString(summary.termination_type);
    return result;
  }

  ceres::Solver::Options* MutableOptions() { return &options_; }

 private:
  const BenchProblem& problem_;
  bool one_block_per_point_;
  std::vector<double> parameters_;
  ceres::Problem ceres_problem_;
  ceres::Solver::Options options_;
};

// ---- GSL gsl_multifit_nlinear ----

class GslSolver : public Solver {
 public:
  explicit GslSolver(const BenchProblem& problem)
      : problem_(problem), n_(problem.x.size()), p_(NumParameters(problem.shape)) {
    gsl_set_error_handler_off();
    gsl_multifit_nlinear_parameters parameters = gsl_multifit_nlinear_default_parameters();
    parameters.trs = gsl_multifit_nlinear_trs_lm;
    parameters.scale = gsl_multifit_nlinear_scale_more;
    parameters.solver = gsl_multifit_nlinear_solver_qr;
    workspace_ = gsl_multifit_nlinear_alloc(gsl_multifit_nlinear_trust, &parameters, n_, p_);
    start_ = gsl_vector_alloc(p_);
    fdf_.f = &F;
    fdf_.df = &Df;
    fdf_.fvv = nullptr;
    fdf_.n = n_;
    fdf_.p = p_;
    fdf_.params = this;
  }
  ~GslSolver() override {
    gsl_vector_free(start_);
    gsl_multifit_nlinear_free(workspace_);
  }
  const char* Name() const override { return "gsl"; }

  FitResult Fit() override {
    for (size_t j = 0; j < p_; ++j) gsl_vector_set(start_, j, problem_.start[j]);
    gsl_multifit_nlinear_init(start_, &fdf_, workspace_);
    int info = 0;
    const int status = gsl_multifit_nlinear_driver(1000, kTolerance, 1e-20, kTolerance, nullptr,
                                                   nullptr, &info, workspace_);
    FitResult result;
    const gsl_vector* x = gsl_multifit_nlinear_position(workspace_);
    for (size_t j = 0; j < p_; ++j) result.parameters.push_back(gsl_vector_get(x, j));
    const gsl_vector* f = gsl_multifit_nlinear_residual(workspace_);
    double rss = 0;
    gsl_blas_ddot(f, f, &rss);
    result.rss = rss;
    result.iterations = static_cast<int>(gsl_multifit_nlinear_niter(workspace_));
    result.evaluations = static_cast<int>(fdf_.nevalf);
    result.jacobian_evaluations = static_cast<int>(fdf_.nevaldf);
    result.status = std::string(gsl_strerror(status)) + ", info " + std::to_string(info);
    return result;
  }

 private:
  static int F(const gsl_vector* x, void* self, gsl_vector* f) {
    const auto* solver = static_cast<GslSolver*>(self);
    Residuals(solver->problem_, x->data, f->data);
    return GSL_SUCCESS;
  }
  static int Df(const gsl_vector* x, void* self, gsl_matrix* jacobian) {
    const auto* solver = static_cast<GslSolver*>(self);
    Jacobian(solver->problem_, x->data, jacobian->data, static_cast<int>(jacobian->tda), true);
    return GSL_SUCCESS;
  }

  const BenchProblem& problem_;
  size_t n_, p_;
  gsl_multifit_nlinear_workspace* workspace_ = nullptr;
  gsl_vector* start_ = nullptr;
  gsl_multifit_nlinear_fdf fdf_;
};

}  // namespace

std::unique_ptr<Solver> MakeMinpackSolver(const BenchProblem& problem) {
  return std::make_unique<MinpackSolver>(problem);
}
std::unique_ptr<Solver> MakeEigenLmSolver(const BenchProblem& problem) {
  return std::make_unique<EigenLmSolver>(problem);
}
std::unique_ptr<Solver> MakeCeresSolver(const BenchProblem& problem, bool one_block_per_point) {
  return std::make_unique<CeresSolver>(problem, one_block_per_point);
}
std::unique_ptr<Solver> MakeGslSolver(const BenchProblem& problem) {
  return std::make_unique<GslSolver>(problem);
}

}  // namespace bench
}  // namespace foothold
