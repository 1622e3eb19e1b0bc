// lobfix (solver, private): the robust losses of robust.hpp as Ceres loss functions.
// Ceres has Huber and Cauchy; Andrews' sine is not among its losses (Ceres 2.1), so all
// three go through robust_rho, which the tests check against Ceres' own Huber and Cauchy.
#pragma once

#include <ceres/loss_function.h>

#include "lobfix/robust.hpp"

namespace lobfix::detail {

class RobustCeresLoss final : public ceres::LossFunction {
 public:
  RobustCeresLoss(RobustLoss loss, double a) : loss_(loss), a_(a) {}
  void Evaluate(double s, double rho[3]) const override {
    const RhoValue r = robust_rho(loss_, s, a_);
    rho[0] = r.rho;
    rho[1] = r.d1;
    rho[2] = r.d2;
  }

 private:
  RobustLoss loss_;
  double a_;
};

}  // namespace lobfix::detail
