#pragma once
// The protocol file: JSON of our own, format "triaxcal-protocol", version 1 (docs/protocol-format.md).

#include <string>

#include "triaxcal/core_export.hpp"
#include "triaxcal/protocol.hpp"

namespace triaxcal {

inline constexpr const char* kProtocolFormat = "triaxcal-protocol";
inline constexpr int kProtocolVersion = 1;

/// Parse a protocol; `source` names the file in messages. Unknown keys, wrong types, missing
/// targets and unknown stage types throw InputError with the key path.
TRIAXCAL_CORE_EXPORT TestProtocol parse_protocol(const std::string& text, const std::string& source);

TRIAXCAL_CORE_EXPORT TestProtocol read_protocol_file(const std::string& path);

}  // namespace triaxcal
