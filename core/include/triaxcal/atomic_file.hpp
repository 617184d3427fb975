#pragma once
// Writes are atomic: content goes to a temporary file beside the target, then a rename. A failed
// run never leaves a half-written result.

#include <filesystem>
#include <string_view>

#include "triaxcal/core_export.hpp"

namespace triaxcal {

/// Throws InputError naming the path when the directory cannot be written.
TRIAXCAL_CORE_EXPORT void write_file_atomically(const std::filesystem::path& path, std::string_view content);

}  // namespace triaxcal
