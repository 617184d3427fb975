#pragma once
// The files of one run, written together or not at all (issue 13, DEVELOPERS.md "Conventions").

#include <filesystem>
#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"

namespace triaxcal {

/// Removes from `dir` the leftovers of killed earlier writes of the files `names`: hidden entries
/// ".<name>.tmp<digits>" (temporary files of write_file_atomically, staging folders of
/// StagedOutputs). Nothing else is touched; errors are ignored.
TRIAXCAL_CORE_EXPORT void sweep_temporaries(const std::filesystem::path& dir, const std::vector<std::string>& names);

/// A run's output files (their names in `dir`) are written into a hidden staging folder
/// ".<run>.tmp<random>" inside `dir` (`path(name)`); `commit()` moves each written file into `dir`
/// (a rename each) and removes the files of `names` this run did not write, so the folder never
/// holds a set mixing two runs. A run that ends before `commit()` (an exception, a failed write)
/// leaves `dir` as it was: the staging folder is removed. Stale staging folders and temporaries of
/// these names, left by killed earlier runs, are swept when the run starts. Two runs into one folder
/// at the same time are not supported.
class TRIAXCAL_CORE_EXPORT StagedOutputs {
 public:
  /// Throws InputError naming `dir` when the staging folder cannot be made.
  StagedOutputs(std::filesystem::path dir, std::string run, std::vector<std::string> names);
  ~StagedOutputs();
  StagedOutputs(const StagedOutputs&) = delete;
  StagedOutputs& operator=(const StagedOutputs&) = delete;

  /// Where to write `name` (one of the run's names) before the commit.
  std::filesystem::path path(const std::string& name) const;
  /// Throws InputError naming the file that cannot be moved into place.
  void commit();
  /// `message` of a failed write with the staging folder's paths given as the files' places in `dir`.
  std::string in_place(const std::string& message) const;

 private:
  std::filesystem::path dir_;
  std::string run_;
  std::vector<std::string> names_;
  std::filesystem::path staging_;
};

}  // namespace triaxcal
