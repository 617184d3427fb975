#include "triaxcal/atomic_file.hpp"

#include <fstream>
#include <random>
#include <system_error>

#include "triaxcal/error.hpp"

namespace triaxcal {

void write_file_atomically(const std::filesystem::path& path, std::string_view content) {
  namespace fs = std::filesystem;
  const fs::path dir = path.has_parent_path() ? path.parent_path() : fs::path(".");
  std::random_device rd;
  const fs::path tmp = dir / ("." + path.filename().string() + ".tmp" + std::to_string(rd()));
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
  std::error_code ec;
  fs::rename(tmp, path, ec);
  if (ec) {
    std::error_code ignored;
    fs::remove(tmp, ignored);
    throw InputError(path.string() + ": cannot replace the file: " + ec.message());
  }
}

}  // namespace triaxcal
