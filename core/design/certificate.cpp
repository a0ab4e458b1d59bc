// Canonical text, digest and verification of a layout (certificate.hpp; the text byte for byte in
// docs/certificate.md).
//
// Invariants of the canonical text: ASCII apart from treatment labels (UTF-8 as the spec gives them);
// fields separated by one TAB, every line ended by one LF, no other whitespace; integers in plain decimal
// ("-" for negatives, no "+", no leading zeros); coordinates as whole millimetres, rounded half away from
// zero (std::llround of metres × 1000), so that the last bits of a double, which may differ between
// machines, never reach the digest unless a centre sits within a rounding error of a half millimetre.
#include "core/design/certificate.hpp"

#include <nettle/sha2.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <map>

#include <fmt/format.h>

#include "core/error.hpp"

namespace pw {

namespace {

// Labels may hold any character: backslash, TAB, LF and CR are escaped so fields and lines stay apart.
std::string escaped(const std::string& s) {
    std::string out;
    out.reserve(s.size());
    for (char c : s) {
        switch (c) {
            case '\\': out += "\\\\"; break;
            case '\t': out += "\\t"; break;
            case '\n': out += "\\n"; break;
            case '\r': out += "\\r"; break;
            default: out += c;
        }
    }
    return out;
}

std::string label_of(const TrialSpec& spec, int treatment) {
    if (treatment < 0 || static_cast<std::size_t>(treatment) >= spec.treatments.size())
        return "\\?" + std::to_string(treatment);
    return escaped(spec.treatments[static_cast<std::size_t>(treatment)].label);
}

long long millimetres(double metres) { return std::llround(metres * 1000.0); }

// What differs between a stored plot and the derived one, as "field a stored, b from the seed" phrases.
std::string plot_difference(const TrialSpec& spec, const PlotPlacement& s, const PlotPlacement& d,
                            const std::vector<std::string>& columns) {
    std::vector<std::string> parts;
    auto num = [&](const char* field, long long stored, long long derived) {
        if (stored != derived) parts.push_back(fmt::format("{} {} stored, {} from the seed", field, stored, derived));
    };
    if (s.treatment != d.treatment)
        parts.push_back(fmt::format("treatment '{}' stored, '{}' from the seed", label_of(spec, s.treatment),
                                    label_of(spec, d.treatment)));
    num("block", s.block, d.block);
    num("walk order", s.walk_order, d.walk_order);
    num("row", s.row, d.row);
    num("col", s.col, d.col);
    num("x_mm", millimetres(s.x_m), millimetres(d.x_m));
    num("y_mm", millimetres(s.y_m), millimetres(d.y_m));
    for (const auto& c : columns) num(c.c_str(), design_column(s, c), design_column(d, c));
    std::string out;
    for (const auto& p : parts) out += (out.empty() ? "" : "; ") + p;
    return out;
}

}  // namespace

std::string certificate_text(const TrialSpec& spec, const Layout& layout, const std::vector<std::string>& columns) {
    std::string t;
    t.reserve(64 + layout.plots.size() * 48);
    t += kCertificateFormat;
    t += '\n';
    t += "design\t" + escaped(spec.design) + '\n';
    t += "seed\t" + std::to_string(layout.seed) + '\n';
    t += "algorithm\t" + escaped(layout.algorithm) + '\n';
    t += "columns\tplot\tblock\ttreatment\trow\tcol\tx_mm\ty_mm";
    for (const auto& c : columns) t += '\t' + escaped(c);
    t += '\n';
    for (const PlotPlacement& p : layout.plots) {
        t += fmt::format("{}\t{}\t{}\t{}\t{}\t{}\t{}", p.id, p.block, label_of(spec, p.treatment), p.row, p.col,
                         millimetres(p.x_m), millimetres(p.y_m));
        for (const auto& c : columns) t += '\t' + std::to_string(design_column(p, c));
        t += '\n';
    }
    return t;
}

std::string sha256_hex(std::string_view bytes) {
    // FIPS 180-4 SHA-256 by GNU Nettle (nettle/sha2.h, API of Nettle 3.x).
    sha256_ctx ctx;
    sha256_init(&ctx);
    sha256_update(&ctx, bytes.size(), reinterpret_cast<const std::uint8_t*>(bytes.data()));
    std::uint8_t digest[SHA256_DIGEST_SIZE];
    sha256_digest(&ctx, SHA256_DIGEST_SIZE, digest);
    static constexpr char kHex[] = "0123456789abcdef";
    std::string hex;
    hex.reserve(2 * SHA256_DIGEST_SIZE);
    for (std::uint8_t b : digest) {
        hex += kHex[b >> 4];
        hex += kHex[b & 0x0f];
    }
    return hex;
}

std::string layout_digest(const TrialSpec& spec, const Layout& layout) {
    return sha256_hex(certificate_text(spec, layout));
}

const char* verify_outcome_name(VerifyOutcome o) {
    switch (o) {
        case VerifyOutcome::Verified: return "verified";
        case VerifyOutcome::NoDigest: return "no-digest";
        case VerifyOutcome::PlotsEdited: return "plots-edited";
        case VerifyOutcome::DigestMismatch: return "digest-mismatch";
        case VerifyOutcome::AlgorithmDiffers: return "algorithm-differs";
        case VerifyOutcome::CannotDerive: return "cannot-derive";
    }
    return "unknown";
}

VerifyReport verify_layout(const TrialSpec& spec, const Layout& stored, const std::optional<std::string>& stored_digest) {
    VerifyReport r;
    r.stored_algorithm = stored.algorithm;
    r.stored_digest = stored_digest.value_or("");

    Layout derived;
    try {
        derived = design_trial(spec, stored.seed);
    } catch (const DesignError& e) {
        r.outcome = VerifyOutcome::CannotDerive;
        r.message = fmt::format("cannot re-derive the layout: this program's design engine refuses the stored spec "
                                "({})",
                                e.what());
        return r;
    }
    r.program_algorithm = derived.algorithm;
    if (derived.algorithm != stored.algorithm) {
        r.outcome = VerifyOutcome::AlgorithmDiffers;
        r.message = fmt::format("cannot re-derive the layout: the trial was randomized with algorithm '{}', this "
                                "program randomizes with '{}'; verify it with a plotwright that has the trial's "
                                "algorithm",
                                stored.algorithm, derived.algorithm);
        return r;
    }
    r.digest_of_derived = sha256_hex(certificate_text(spec, derived, derived.columns));
    r.digest_of_stored = sha256_hex(certificate_text(spec, stored, derived.columns));

    // Compare plot by plot, keyed by plot id.
    std::map<int, const PlotPlacement*> want, have;
    for (const auto& p : derived.plots) want[p.id] = &p;
    for (const auto& p : stored.plots) have[p.id] = &p;
    for (const auto& [id, d] : want) {
        auto it = have.find(id);
        if (it == have.end()) {
            r.differences.push_back({id, "missing from the stored plots"});
            continue;
        }
        std::string what = plot_difference(spec, *it->second, *d, derived.columns);
        if (!what.empty()) r.differences.push_back({id, std::move(what)});
    }
    for (const auto& [id, s] : have)
        if (!want.count(id)) r.differences.push_back({id, "stored, but the seed gives no such plot"});
    std::sort(r.differences.begin(), r.differences.end(),
              [](const PlotDifference& a, const PlotDifference& b) { return a.plot < b.plot; });

    if (!r.differences.empty()) {
        std::string ids;
        for (const auto& d : r.differences) ids += (ids.empty() ? "" : ", ") + std::to_string(d.plot);
        r.outcome = VerifyOutcome::PlotsEdited;
        r.message = fmt::format("the stored plots were edited: {} plot{} differ{} from what seed {} gives ({})",
                                r.differences.size(), r.differences.size() == 1 ? "" : "s",
                                r.differences.size() == 1 ? "s" : "", stored.seed, ids);
        return r;
    }
    if (!stored_digest) {
        r.outcome = VerifyOutcome::NoDigest;
        r.message = fmt::format("the layout is the one seed {} gives; no digest was stored with this trial (made "
                                "before certificates), so only the re-derivation vouches for it",
                                stored.seed);
        return r;
    }
    if (*stored_digest != r.digest_of_stored) {
        r.outcome = VerifyOutcome::DigestMismatch;
        r.message = fmt::format("the stored digest does not match the stored plots: stored {}, the plots give {} "
                                "(the plots themselves are what seed {} gives)",
                                *stored_digest, r.digest_of_stored, stored.seed);
        return r;
    }
    r.outcome = VerifyOutcome::Verified;
    r.message = fmt::format("the layout is the one randomization gave: seed {}, algorithm '{}', SHA-256 {}",
                            stored.seed, stored.algorithm, r.digest_of_stored);
    return r;
}

}  // namespace pw
