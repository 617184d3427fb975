#include "triaxcal/atomic_file.hpp"

#include <fstream>
#include <random>
#include <system_error>

#include "triaxcal/error.hpp"

namespace triaxcal {

std::filesystem::path temporary_path_beside(const std::filesystem::path& path) {
  namespace fs = std::filesystem;
  const fs::path dir = path.has_parent_path() ? path.parent_path() : fs::path(".");
  std::random_device rd;
  return dir / ("." + path.filename().string() + ".tmp" + std::to_string(rd()));
}

void replace_with_temporary(const std::filesystem::path& tmp, const std::filesystem::path& path) {
  namespace fs = std::filesystem;
  std::error_code ec;
  fs::rename(tmp, path, ec);
  if (ec) {
    std::error_code ignored;
    fs::remove(tmp, ignored);
    throw InputError(path.string() + ": cannot replace the file: " + ec.message());
  }
}

void write_file_atomically(const std::filesystem::path& path, std::string_view content) {
  namespace fs = std::filesystem;
  const fs::path tmp = temporary_path_beside(path);
  {
    std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
    if (!out) throw InputError(path.string() + ": cannot write (directory missing or not writable)");
    out.write(content.data(), static_cast<std::streamsize>(content.size()));
    out.flush();
    if (!out) {
      std::error_code ignored;
      fs::remove(tmp, ignored);
      throw InputError(path.string() + ": write failed (disk full?)");
    }
  }
  replace_with_temporary(tmp, path);
}

}  // namespace triaxcal
