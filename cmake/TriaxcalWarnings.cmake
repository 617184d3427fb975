# Warning set for every triaxcal target (not for consumers).
add_library(triaxcal_warnings INTERFACE)
target_compile_options(triaxcal_warnings INTERFACE -Wall -Wextra -Wpedantic -Wshadow
  # GCC 12 reports a false -Wrestrict inside std::string operator+ (GCC bug 105329).
  $<$<CXX_COMPILER_ID:GNU>:-Wno-restrict>)
if(TRIAXCAL_WARNINGS_AS_ERRORS)
  target_compile_options(triaxcal_warnings INTERFACE -Werror)
endif()
if(TRIAXCAL_SANITIZE)
  # GCC 12 reports false -Wmaybe-uninitialized inside libstdc++ (std::function in <regex>) when
  # AddressSanitizer instruments the code; the Release build keeps the warning.
  target_compile_options(triaxcal_warnings INTERFACE -fsanitize=address,undefined -fno-sanitize-recover=all -fno-omit-frame-pointer
                                                     $<$<CXX_COMPILER_ID:GNU>:-Wno-maybe-uninitialized>)
  target_link_options(triaxcal_warnings INTERFACE -fsanitize=address,undefined)
endif()
