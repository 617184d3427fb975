#include "triaxcal/staged_outputs.hpp"

#include <random>
#include <stdexcept>
#include <system_error>
#include <utility>

#include "triaxcal/error.hpp"

namespace triaxcal {

namespace {

/// ".<name>.tmp<digits>": a temporary of ours for `name` (temporary_path_beside, StagedOutputs).
bool is_temporary_of(const std::string& entry, const std::string& name) {
  const std::string prefix = "." + name + ".tmp";
  if (entry.size() <= prefix.size() || entry.compare(0, prefix.size(), prefix) != 0) return false;
  for (std::size_t i = prefix.size(); i < entry.size(); ++i)
    if (entry[i] < '0' || entry[i] > '9') return false;
  return true;
}

}  // namespace

void sweep_temporaries(const std::filesystem::path& dir, const std::vector<std::string>& names) {
  namespace fs = std::filesystem;
  std::error_code ec;
  std::vector<fs::path> stale;
  for (fs::directory_iterator it(dir, ec), end; !ec && it != end; it.increment(ec)) {
    const std::string entry = it->path().filename().string();
    for (const std::string& name : names)
      if (is_temporary_of(entry, name)) stale.push_back(it->path());
  }
  for (const fs::path& p : stale) {
    std::error_code ignored;
    fs::remove_all(p, ignored);
  }
}

StagedOutputs::StagedOutputs(std::filesystem::path dir, std::string run, std::vector<std::string> names)
    : dir_(std::move(dir)), run_(std::move(run)), names_(std::move(names)) {
  namespace fs = std::filesystem;
  std::vector<std::string> ours = names_;
  ours.push_back(run_);
  sweep_temporaries(dir_, ours);
  std::random_device rd;
  std::error_code ec;
  for (int attempt = 0; attempt < 100; ++attempt) {
    const fs::path candidate = dir_ / ("." + run_ + ".tmp" + std::to_string(rd()));
    if (fs::create_directory(candidate, ec) && !ec) {
      staging_ = candidate;
      return;
    }
  }
  throw InputError(dir_.string() + ": cannot create a staging folder for the run's files (" + ec.message() + ")");
}

StagedOutputs::~StagedOutputs() {
  if (staging_.empty()) return;
  std::error_code ignored;
  std::filesystem::remove_all(staging_, ignored);
}

std::filesystem::path StagedOutputs::path(const std::string& name) const {
  bool known = false;
  for (const std::string& n : names_) known = known || n == name;
  if (!known) throw std::logic_error("StagedOutputs::path: '" + name + "' is not one of the run's files");
  return staging_ / name;
}

std::string StagedOutputs::in_place(const std::string& message) const {
  if (staging_.empty()) return message;
  const std::string from = staging_.string() + "/", to = (dir_ / "").string();
  std::string out = message;
  for (std::size_t at = out.find(from); at != std::string::npos; at = out.find(from, at + to.size()))
    out.replace(at, from.size(), to);
  return out;
}

void StagedOutputs::commit() {
  namespace fs = std::filesystem;
  std::vector<std::string> written, left_out;
  for (const std::string& name : names_) {
    std::error_code ec;
    (fs::is_regular_file(staging_ / name, ec) ? written : left_out).push_back(name);
  }
  for (const std::string& name : written) {
    std::error_code ec;
    fs::rename(staging_ / name, dir_ / name, ec);
    if (ec) throw InputError((dir_ / name).string() + ": cannot move the run's file into place: " + ec.message());
  }
  // Files of an earlier run that this run does not write would make a mixed set.
  for (const std::string& name : left_out) {
    std::error_code ec;
    fs::remove(dir_ / name, ec);
  }
  std::error_code ignored;
  fs::remove_all(staging_, ignored);
  staging_.clear();
}

}  // namespace triaxcal
