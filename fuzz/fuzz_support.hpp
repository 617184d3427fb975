#pragma once
// Shared by the libFuzzer harnesses: bad input must end in an InputError (a message for the user);
// any other exception escapes, and libFuzzer reports it as a crash with the input that caused it.

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <string>
#include <unistd.h>

namespace triaxcal::fuzz {

inline std::string text_of(const std::uint8_t* data, std::size_t size) {
  return std::string(reinterpret_cast<const char*>(data), size);
}

/// A scratch folder of this process (libFuzzer's workers are processes): files that a reader must
/// find on disk are written here.
inline const std::filesystem::path& scratch() {
  static const std::filesystem::path dir = [] {
    const auto d = std::filesystem::temp_directory_path() / ("triaxcal_fuzz_" + std::to_string(::getpid()));
    std::filesystem::create_directories(d);
    return d;
  }();
  return dir;
}

inline void write_file(const std::filesystem::path& path, const char* data, std::size_t size) {
  std::ofstream out(path, std::ios::binary | std::ios::trunc);
  out.write(data, static_cast<std::streamsize>(size));
}

}  // namespace triaxcal::fuzz
