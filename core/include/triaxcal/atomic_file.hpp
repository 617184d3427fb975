#pragma once
// Writes are atomic: content goes to a temporary file beside the target, then a rename. A failed
// run never leaves a half-written result.

#include <filesystem>
#include <string_view>

#include "triaxcal/core_export.hpp"

namespace triaxcal {

/// Throws InputError naming the path when the directory cannot be written.
TRIAXCAL_CORE_EXPORT void write_file_atomically(const std::filesystem::path& path, std::string_view content);

/// For writers that need a file name of their own (HDF5): a fresh hidden temporary name in the
/// target's directory, ".<name>.tmp<random>".
TRIAXCAL_CORE_EXPORT std::filesystem::path temporary_path_beside(const std::filesystem::path& path);

/// Renames the finished temporary file onto `path`; on failure removes it and throws InputError.
TRIAXCAL_CORE_EXPORT void replace_with_temporary(const std::filesystem::path& temporary,
                                                 const std::filesystem::path& path);

}  // namespace triaxcal
