// How a functional dimension was certified, in the words pleat's outputs use
// (certify's --json, the report's data, the Python module's dict).
#pragma once

#include "enumerate/functional_dimension.hpp"

#include <optional>
#include <string_view>

namespace pleat {

// "points" (exact points met the scaling bound, no walk), "walk" (the rank met
// the scaling bound during the walk), "kernel" (an exact kernel checked on every
// region); nullopt when the result is not certified.
inline std::optional<std::string_view> certified_by_word(const FunctionalDimensionResult& result) {
  if (!result.certified) return std::nullopt;
  if (result.certified_by_points) return "points";
  if (result.early_stop) return "walk";
  return "kernel";
}

}  // namespace pleat
