#pragma once
// Local rates dy/dx of a measured curve (internal to core/src/interpret): at every point, the
// least-squares slope of y against x over a window of fixed width in x centred at the point.
// Moving-window regression is common practice for differentiating scattered lab data, no source;
// the width rule below is ours.
//
// Width: the scatter of the data about a smooth curve, sigma (estimated from the data, see
// scatter_about_smooth_curve), and the median spacing h of x set the width W at which a straight line
// over W has the standard error kRateTargetError: for n points spaced h over W, Sxx = W^3 / (12 h), so
// se = sigma sqrt(12 h / W^3) and W = (12 h sigma^2 / se^2)^(1/3) (hand calculation). W is at least
// kRateMinPoints - 1 spacings and at most kRateMaxSpanFraction of the span of x.

#include <string>
#include <vector>

#include "triaxcal/series.hpp"

namespace triaxcal::detail {

/// Standard error aimed for in a local rate (-). 0.005 in d eps_v / d eps_a is about 0.1 deg of psi
/// near psi = 10 deg (sin psi = -d / (2 - d), d(psi)/dd = 2 / ((2 - d)^2 cos psi)).
inline constexpr double kRateTargetError = 0.005;
/// Fewest points in a window (a line through 5 points, as the earlier sliding 5-point slope).
inline constexpr int kRateMinPoints = 5;
/// Widest window as a fraction of the span of x, so that a stage has at least three windows.
inline constexpr double kRateMaxSpanFraction = 1.0 / 3.0;

struct LocalRates {
  double width = kNotGiven;     ///< window width in x
  double spacing = kNotGiven;   ///< median spacing of x
  double noise = kNotGiven;     ///< scatter of y about a smooth curve of x
  std::vector<double> rate;     ///< per point: slope over the window centred at it (NaN with < kRateMinPoints points)
  std::vector<double> se;       ///< its standard error
  std::vector<int> first, last; ///< per point: the window's index range
  std::vector<char> full;       ///< per point: the whole window lies within the data
};

/// Scatter of y about a smooth function of x: at each inner point the residual from the straight
/// line through its two neighbours, r = y_j - (w y_{j-1} + (1 - w) y_{j+1}), has the variance
/// sigma^2 (1 + w^2 + (1 - w)^2) for independent errors of sd sigma (errors in x enter through the
/// local slope: sigma^2 = sigma_y^2 + (dy/dx)^2 sigma_x^2); sigma = median |r| / sqrt(1 + w^2 + (1 - w)^2)
/// / 0.6745 (the median absolute value of a normal variable is 0.6745 sd; robust to a few kinks).
/// Curvature adds y'' h^2 / 8 at most to r, below lab noise at lab spacings.
double scatter_about_smooth_curve(const std::vector<double>& x, const std::vector<double>& y);

/// Local rates of y against x; x in increasing order (small reversals from noise are tolerated).
LocalRates local_rates(const std::vector<double>& x, const std::vector<double>& y);

}  // namespace triaxcal::detail
