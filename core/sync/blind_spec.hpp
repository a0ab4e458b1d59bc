// The spec text a handheld of a blind trial receives: the station's spec with every treatment label
// replaced by a neutral code, so that nothing on the device (the recorder, the stored spec, an export made
// on the device) can name a treatment. Descriptions and comments go; designs, plots, traits and flags stay,
// so the device's database lays out and records exactly like the station's.
//
// Codes: [[treatments]] labels become T01, T02, ... in spec order (T001... past 99); the factors of a
// factorial become A, B, C with levels A1, A2, ..., B1, ...; `extra_control` becomes X0. `check` is kept
// only where the design needs it (augmented blocks: checks are every block's repeated entries and can be
// told from the layout anyway). Pure: text in, text out (toml++ reads and writes it).
#pragma once
#include <string>

namespace pw {

// Throws SpecError (naming `source`) when the text is not a spec, DesignError when the rewritten text
// would not parse as the same trial.
std::string blind_spec_toml(const std::string& toml_text, const std::string& source);

}  // namespace pw
