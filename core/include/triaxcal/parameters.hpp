#pragma once
// Parameter values by name: defaults, unknown names, bounds, with exact messages.

#include <map>
#include <string>

#include "triaxcal/core_export.hpp"
#include "triaxcal/model.hpp"

namespace triaxcal {

/// "(-1, 0.5)" or "[0, 90)" etc.: the admissible interval of a parameter as it reads in messages.
TRIAXCAL_CORE_EXPORT std::string format_bounds(const ParameterInfo& info);

/// A number as messages print it: shortest form that round-trips to 6 significant digits.
TRIAXCAL_CORE_EXPORT std::string format_number(double value);

/// Values in metadata order from values by name. Omitted parameters take their default; a
/// parameter with no default that is omitted, an unknown name or a value outside the physical
/// bounds throws InputError: "<where>: <model>: <name> = <value> is outside <bounds> (<unit>)".
TRIAXCAL_CORE_EXPORT ParameterValues resolve_parameters(const ModelInfo& info,
                                                        const std::map<std::string, double>& given,
                                                        const std::string& where);

/// Checks one value against its bounds; throws InputError as above.
TRIAXCAL_CORE_EXPORT void check_bounds(const ModelInfo& model, const ParameterInfo& info, double value,
                                       const std::string& where);

/// Index of a parameter by name, or -1.
TRIAXCAL_CORE_EXPORT int parameter_index(const ModelInfo& info, const std::string& name);

/// The name that replaced a former parameter name (ModelInfo::renamed), or "" when `name` is not one.
TRIAXCAL_CORE_EXPORT std::string new_name_of(const ModelInfo& info, const std::string& name);

/// "<where>: <model>: parameter '<old>' is now called '<new>'" for a former name, else "".
TRIAXCAL_CORE_EXPORT std::string renamed_message(const ModelInfo& info, const std::string& name, const std::string& where);

/// Index of `word` among a word parameter's words, or -1.
TRIAXCAL_CORE_EXPORT int word_index(const ParameterInfo& info, const std::string& word);

/// The words of a word parameter as messages list them: "a", "b" or "c" (quoted).
TRIAXCAL_CORE_EXPORT std::string word_list(const ParameterInfo& info);

/// A value as files write it: the word of a word parameter (its index rounded), else the number
/// (format_number); "" for an index that is not one of the words.
TRIAXCAL_CORE_EXPORT std::string word_of(const ParameterInfo& info, double value);

}  // namespace triaxcal
