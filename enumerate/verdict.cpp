#include "enumerate/verdict.hpp"

namespace pleat {

std::string_view claim_word(Verdict verdict) {
  switch (verdict) {
    case Verdict::consistent: return "consistent";
    case Verdict::too_low: return "too-low";
    case Verdict::impossible: return "impossible";
  }
  return "?";
}

std::string_view sample_word(Verdict verdict) {
  switch (verdict) {
    case Verdict::consistent: return "equal";
    case Verdict::too_low: return "below";
    case Verdict::impossible: return "above-impossible";
  }
  return "?";
}

}  // namespace pleat
