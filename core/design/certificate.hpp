// The randomization certificate: a SHA-256 digest of a canonical text of the layout, stored with the trial
// when it is designed, and the check that a stored layout is the one its seed gives.
//
// The canonical text (format kCertificateFormat; byte for byte in docs/certificate.md) holds the design,
// the seed, the algorithm id and, in walking order, every plot's id, block, treatment label, grid row and
// column, centre to the millimetre and the design's own columns. It is a pure function of the spec and the
// layout; whatever prints the same text certifies the same layout on any machine.
//
// Digest: SHA-256 (FIPS 180-4) computed by GNU Nettle, a pure computation library (no files, no clock),
// linked by pw_core for this file only.
#pragma once
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"

namespace pw {

inline constexpr const char* kCertificateFormat = "plotwright-layout-certificate/1";

// The canonical text of `layout`, with the design columns `columns` (names among rep, incomplete_block,
// main, sub, square_row, square_col; normally layout.columns). A treatment index outside spec.treatments
// prints as "\?" followed by the index (a sequence no escaped label produces).
std::string certificate_text(const TrialSpec& spec, const Layout& layout, const std::vector<std::string>& columns);
inline std::string certificate_text(const TrialSpec& spec, const Layout& layout) {
    return certificate_text(spec, layout, layout.columns);
}

// SHA-256 of the bytes, as 64 lower-case hexadecimal digits.
std::string sha256_hex(std::string_view bytes);

// sha256_hex(certificate_text(spec, layout)).
std::string layout_digest(const TrialSpec& spec, const Layout& layout);

// One plot whose stored facts differ from what the seed gives.
struct PlotDifference {
    int plot = 0;
    std::string what;   // "treatment 'B' stored, 'C' from the seed; row 2 stored, 3 from the seed"
};

enum class VerifyOutcome {
    Verified,          // the stored plots are what the seed gives, and the stored digest certifies them
    NoDigest,          // the stored plots are what the seed gives; no digest was stored with the trial
    PlotsEdited,       // the stored plots differ from what the seed gives
    DigestMismatch,    // the stored plots are what the seed gives, but the stored digest is not theirs
    AlgorithmDiffers,  // the trial was randomized by another algorithm version: cannot re-derive
    CannotDerive,      // this program's design engine refuses the stored spec
};

struct VerifyReport {
    VerifyOutcome outcome = VerifyOutcome::Verified;
    std::string stored_algorithm;
    std::string program_algorithm;     // empty when the spec could not be designed
    std::string stored_digest;         // empty when none was stored
    std::string digest_of_stored;      // digest of the stored plots (with the derived design columns)
    std::string digest_of_derived;     // digest of the layout the seed gives
    std::vector<PlotDifference> differences;   // PlotsEdited: by plot id, ascending
    std::string message;               // one plain sentence saying which of the outcomes it is and why

    bool ok() const { return outcome == VerifyOutcome::Verified || outcome == VerifyOutcome::NoDigest; }
};

// Re-derives the layout of `spec` with stored.seed (design_trial) and compares it with `stored`, then the
// stored digest with the digest of the stored plots. Pure: the caller reads the database.
VerifyReport verify_layout(const TrialSpec& spec, const Layout& stored, const std::optional<std::string>& stored_digest);

// "verified", "no-digest", "plots-edited", "digest-mismatch", "algorithm-differs", "cannot-derive".
const char* verify_outcome_name(VerifyOutcome o);

}  // namespace pw
