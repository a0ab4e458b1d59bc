// Trait values as a technician types them, checked against the trait's kind, range and scale.
// The canonical text is what is stored and exported; `number` is set for Number, Count and Score.
#pragma once
#include <optional>
#include <string>
#include <string_view>

#include "core/spec/trial_spec.hpp"

namespace pw {

struct TraitValue {
    std::string text;               // canonical form: "12.40" (decimals as specified), "7", "2026-06-14"
    std::optional<double> number;
};

// Throws InputError with a sentence naming the trait and what was expected
// ("grain_kg: 51.2 is above the maximum 40 kg").
TraitValue parse_trait_value(const TraitSpec& trait, std::string_view typed);

// One line describing what the trait accepts: "kg, 0 to 40, 2 decimals" / "score 1 to 9" / "date YYYY-MM-DD".
std::string describe_trait(const TraitSpec& trait);

}  // namespace pw
