#include "local_rate.hpp"

#include <algorithm>
#include <cmath>

#include "triaxcal/interpret.hpp"

namespace triaxcal::detail {

namespace {

double median(std::vector<double> v) {
  if (v.empty()) return kNotGiven;
  const std::size_t mid = v.size() / 2;
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(mid), v.end());
  const double upper = v[mid];
  if (v.size() % 2 == 1) return upper;
  return 0.5 * (upper + *std::max_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(mid)));
}

}  // namespace

double scatter_about_smooth_curve(const std::vector<double>& x, const std::vector<double>& y) {
  std::vector<double> r;
  for (std::size_t j = 1; j + 1 < x.size(); ++j) {
    const double span = x[j + 1] - x[j - 1];
    if (!(span > 0.0)) continue;
    const double w = (x[j + 1] - x[j]) / span;
    if (!(w >= 0.0 && w <= 1.0)) continue;
    const double res = y[j] - (w * y[j - 1] + (1.0 - w) * y[j + 1]);
    r.push_back(std::abs(res) / std::sqrt(1.0 + w * w + (1.0 - w) * (1.0 - w)));
  }
  const double m = median(r);
  return std::isnan(m) ? kNotGiven : m / 0.6744897501960817;
}

LocalRates local_rates(const std::vector<double>& x, const std::vector<double>& y) {
  LocalRates out;
  const std::size_t m = x.size();
  out.rate.assign(m, kNotGiven);
  out.se.assign(m, kNotGiven);
  out.first.assign(m, -1);
  out.last.assign(m, -1);
  out.full.assign(m, 0);
  if (m < static_cast<std::size_t>(kRateMinPoints)) return out;
  std::vector<double> dx;
  for (std::size_t j = 1; j < m; ++j)
    if (x[j] > x[j - 1]) dx.push_back(x[j] - x[j - 1]);
  const double h = median(dx);
  const double lo = *std::min_element(x.begin(), x.end()), hi = *std::max_element(x.begin(), x.end());
  if (!(h > 0.0) || !(hi > lo)) return out;
  out.spacing = h;
  out.noise = scatter_about_smooth_curve(x, y);
  const double sigma = std::isnan(out.noise) ? 0.0 : out.noise;
  const double w_noise = std::cbrt(12.0 * h * sigma * sigma / (kRateTargetError * kRateTargetError));
  const double w_points = (kRateMinPoints - 1) * h;
  const double w = std::min(std::max(w_noise, w_points), kRateMaxSpanFraction * (hi - lo));
  out.width = w;
  // Half a spacing of slack: a window counts as full when it reaches the data's ends to within it.
  const double half = 0.5 * w * (1.0 + 1e-9), slack = 0.5 * h;
  std::vector<double> wx, wy;
  for (std::size_t c = 0; c < m; ++c) {
    std::size_t a = c, b = c;
    while (a > 0 && std::abs(x[a - 1] - x[c]) <= half) --a;
    while (b + 1 < m && std::abs(x[b + 1] - x[c]) <= half) ++b;
    out.first[c] = static_cast<int>(a);
    out.last[c] = static_cast<int>(b);
    out.full[c] = x[c] - half >= lo - slack && x[c] + half <= hi + slack;
    if (b - a + 1 < static_cast<std::size_t>(kRateMinPoints)) continue;
    wx.assign(x.begin() + static_cast<std::ptrdiff_t>(a), x.begin() + static_cast<std::ptrdiff_t>(b) + 1);
    wy.assign(y.begin() + static_cast<std::ptrdiff_t>(a), y.begin() + static_cast<std::ptrdiff_t>(b) + 1);
    const LineFit f = fit_line(wx, wy);
    out.rate[c] = f.slope;
    out.se[c] = f.se_slope;
  }
  return out;
}

}  // namespace triaxcal::detail
