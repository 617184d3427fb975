#pragma once
// Headless Chromium for the report tests (Debian package `chromium`). The browser is looked up as
// $TRIAXCAL_CHROMIUM, then chromium, chromium-browser, google-chrome on PATH. A missing browser is
// a test failure with an install hint, never a silent pass.

#include <sys/wait.h>

#include <cstdlib>
#include <filesystem>
#include <string>
#include <vector>

#include "cli_run.hpp"

namespace triaxcal::test {

inline std::string find_chromium() {
  if (const char* env = std::getenv("TRIAXCAL_CHROMIUM"); env && *env)
    return std::filesystem::exists(env) ? std::string(env) : std::string();  // a wrong path is not a browser
  for (const char* name : {"chromium", "chromium-browser", "google-chrome"}) {
    const std::string cmd = std::string("command -v ") + name + " >/dev/null 2>&1";
    if (std::system(cmd.c_str()) == 0) return name;
  }
  return "";
}

inline const char* kChromiumMissing =
    "headless Chromium not found: install Debian's package (apt-get install -y chromium) or set "
    "TRIAXCAL_CHROMIUM to the browser's path";

struct BrowserRun {
  int exit_code = -1;
  std::string dom;     ///< the DOM after the page's scripts ran (--dump-dom)
  std::string log;     ///< stderr with --enable-logging=stderr: console messages appear as "CONSOLE"
};

/// Loads `html` (a file path) headless, offline, in a fresh profile. With `screenshot` non-empty,
/// a second run saves a PNG of the first `height` px.
inline BrowserRun run_chromium(const std::string& browser, const std::string& html, const std::string& tag,
                               const std::string& screenshot = "", int height = 3000) {
  namespace fs = std::filesystem;
  const fs::path profile = fs::absolute("chromium_profile_" + tag);
  fs::remove_all(profile);
  fs::create_directories(profile);
  const std::string common = "timeout 60 " + browser +
                             " --headless --no-sandbox --disable-gpu --disable-quic --no-first-run"
                             " --disable-background-networking --disable-component-update --disable-sync"
                             " --disable-extensions --user-data-dir=" +
                             profile.string() + " --enable-logging=stderr --v=0";
  const std::string url = "file://" + fs::absolute(html).string();
  const std::string out = "chromium_" + tag + ".dom", err = "chromium_" + tag + ".log";
  BrowserRun r;
  const int status = std::system((common + " --dump-dom '" + url + "' >" + out + " 2>" + err).c_str());
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.dom = slurp(out);
  r.log = slurp(err);
  if (!screenshot.empty()) {
    fs::remove(screenshot);
    const std::string shot = common + " --hide-scrollbars --window-size=1200," + std::to_string(height) +
                             " --screenshot=" + fs::absolute(screenshot).string() + " '" + url + "' >>" + err +
                             ".shot 2>&1";
    const int shot_status = std::system(shot.c_str());
    (void)shot_status;  // the test checks the PNG itself
  }
  fs::remove_all(profile);
  return r;
}

inline const char* kPdftotextMissing =
    "pdftotext not found: the printed-layout tests read the PDF Chromium prints with it; install Debian's "
    "poppler-utils (apt-get install -y poppler-utils; scripts/test installs it)";

/// Prints `html` (a file path) to PDF headless, as a reader would from the browser (A4 from the
/// page's @page rule, Chromium's own header and footer off: the page's margin boxes are what
/// prints), and returns the text of each page (pdftotext -layout, pages split at form feeds).
/// Empty when either program fails; `log` gets what they said.
inline std::vector<std::string> printed_pages(const std::string& browser, const std::string& html, const std::string& tag,
                                              std::string& log) {
  namespace fs = std::filesystem;
  const fs::path profile = fs::absolute("chromium_profile_" + tag);
  fs::remove_all(profile);
  fs::create_directories(profile);
  const std::string pdf = fs::absolute("printed_" + tag + ".pdf").string(), text = "printed_" + tag + ".txt",
                    err = "printed_" + tag + ".log";
  fs::remove(pdf);
  const std::string print = "timeout 60 " + browser +
                            " --headless --no-sandbox --disable-gpu --no-first-run --disable-extensions"
                            " --no-pdf-header-footer --user-data-dir=" +
                            profile.string() + " --print-to-pdf=" + pdf + " 'file://" + fs::absolute(html).string() +
                            "' >" + err + " 2>&1";
  const int printed = std::system(print.c_str());
  fs::remove_all(profile);
  const int converted = printed == 0 ? std::system(("pdftotext -layout " + pdf + " " + text + " >>" + err + " 2>&1").c_str()) : -1;
  log = slurp(err);
  std::vector<std::string> pages;
  if (converted != 0) return pages;
  const std::string all = slurp(text);
  std::size_t start = 0;
  for (std::size_t ff; (ff = all.find('\f', start)) != std::string::npos; start = ff + 1) pages.push_back(all.substr(start, ff - start));
  if (start < all.size() && all.find_first_not_of(" \n", start) != std::string::npos) pages.push_back(all.substr(start));
  return pages;
}

/// Console lines of a Chromium log ("...:INFO:CONSOLE(12)] "message", source: ...").
inline std::string console_lines(const std::string& log) {
  std::string out;
  std::size_t pos = 0;
  while ((pos = log.find("CONSOLE", pos)) != std::string::npos) {
    const std::size_t start = log.rfind('\n', pos);
    const std::size_t end = log.find('\n', pos);
    out += log.substr(start == std::string::npos ? 0 : start + 1,
                      (end == std::string::npos ? log.size() : end) - (start == std::string::npos ? 0 : start + 1)) +
           "\n";
    pos = end == std::string::npos ? log.size() : end;
  }
  return out;
}

}  // namespace triaxcal::test
