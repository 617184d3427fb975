// Look-ups the calibration-file tests share (the seeding and fixing of parameters from the
// interpretation: tests/calibrate/interpretation_bounds_test.cpp, sand_seed_test.cpp).
#pragma once

#include <catch2/catch.hpp>

#include <string>
#include <vector>

#include "triaxcal/calibration_file.hpp"

namespace triaxcal::test {

/// The calibration file's spec of parameter `name`; fails the test when there is none.
inline const ParameterSpec& spec_of(const CalibrationFile& f, const std::string& name) {
  for (const ParameterSpec& p : f.parameters)
    if (p.name == name) return p;
  FAIL("no parameter " << name);
  return f.parameters.front();
}

/// Whether `notes` holds exactly `line`.
inline bool has_line(const std::vector<std::string>& notes, const std::string& line) {
  for (const std::string& n : notes)
    if (n == line) return true;
  return false;
}

}  // namespace triaxcal::test
