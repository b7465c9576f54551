// One vocabulary for judging a value against what was proved: a claimed
// functional dimension (certify --claim) and a sampled float rank (sample).
// The two outputs spell the verdicts differently, as their formats fix
// (docs/formats.md: pleat-certify/1's claim, pleat-sample/1's verdict).
#pragma once

#include <string_view>

namespace pleat {

enum class Verdict {
  consistent,  // equals the certified value, or lies within the proved bounds
  too_low,     // below what was proved (directions missed, rank lost to rounding)
  impossible,  // above what was proved (rank invented by rounding)
};

// "consistent", "too-low", "impossible" (certify's claim).
std::string_view claim_word(Verdict verdict);
// "equal", "below", "above-impossible" (sample's verdict).
std::string_view sample_word(Verdict verdict);

}  // namespace pleat
