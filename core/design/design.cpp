// Chooses the generator named by trial.design, checks the spec against what that design needs, and lays
// the result on the field (geometry.hpp). Adding a design means adding its generator here, its name to
// design_names() (core/spec/trial_spec.cpp) and its keys to docs/spec.md.
//
// One Rng seeded with the trial's seed feeds the generator; the placer draws nothing. Treatment indices
// are those of TrialSpec::treatments (for factorials the crossing, first factor slowest); generators with
// an order of their own (split/strip: A slowest; augmented: checks first) are mapped back here.
#include <algorithm>
#include <cctype>
#include <cmath>

#include <fmt/format.h>

#include "core/design/alpha.hpp"
#include "core/design/augmented.hpp"
#include "core/design/crd.hpp"
#include "core/design/geometry.hpp"
#include "core/design/latin.hpp"
#include "core/design/layout.hpp"
#include "core/design/paired.hpp"
#include "core/design/rcbd.hpp"
#include "core/design/split_plot.hpp"
#include "core/error.hpp"
#include "core/random/engine.hpp"

namespace pw {

namespace {

constexpr int kMaxBlocks = 99;
constexpr int kMaxTreatments = 999;
constexpr double kRightAngleToleranceDeg = 10.0;

std::string lower(std::string s) {
    for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    return s;
}

std::string design_list() {
    std::string out;
    for (const auto& n : design_names()) out += (out.empty() ? "" : ", ") + n;
    return out;
}

void check_labels(const TrialSpec& spec) {
    const auto t = spec.treatments.size();
    if (t > static_cast<std::size_t>(kMaxTreatments))
        throw DesignError(fmt::format("treatments: at most {} treatments, got {}", kMaxTreatments, t));
    for (std::size_t i = 0; i < t; ++i) {
        if (spec.treatments[i].label.empty())
            throw DesignError(fmt::format("treatments[{}].label: expected a non-empty label", i + 1));
        for (std::size_t j = 0; j < i; ++j)
            if (lower(spec.treatments[i].label) == lower(spec.treatments[j].label))
                throw DesignError(fmt::format("treatments[{}].label: '{}' repeats treatments[{}]; labels must differ",
                                              i + 1, spec.treatments[i].label, j + 1));
    }
}

void need_treatments(const TrialSpec& spec, std::size_t at_least, const char* design) {
    if (spec.treatments.size() < at_least)
        throw DesignError(fmt::format("treatments: a {} needs at least {} treatments, got {}", design, at_least,
                                      spec.treatments.size()));
}

void need_blocks(const TrialSpec& spec, int at_least, const char* design, const char* what = "blocks") {
    if (spec.blocks < at_least)
        throw DesignError(fmt::format("trial.blocks: a {} needs at least {} {}, got {}", design, at_least, what, spec.blocks));
    if (spec.blocks > kMaxBlocks)
        throw DesignError(fmt::format("trial.blocks: at most {} {} can be numbered, got {}", kMaxBlocks, what, spec.blocks));
}

// Plots side by side in one row of a block of `plots` plots: plots_per_row when given (at most `plots`), else
// `natural` (a whole block, or the CRD's square) but never more than fit the room across the gradient when
// the field's size is given.
int plots_per_row(const TrialSpec& spec, int natural, int plots) {
    int p = spec.field.plots_per_row > 0 ? std::min(spec.field.plots_per_row, plots) : natural;
    if (const auto room = room_across_gradient(spec)) {
        const int fit = plots_fitting(*room, spec.field.plot_width_m, spec.field.plot_gap_m);
        if (fit < 1)
            throw DesignError(fmt::format("field: not even one plot {} m wide fits across the gradient in the {} m of "
                                          "room the field leaves (field.length_m / field.width_m, border)",
                                          spec.field.plot_width_m, *room));
        if (spec.field.plots_per_row == 0) p = std::min(p, fit);
    }
    return p;
}

// The two factors of a split or strip plot: index of the main (A) factor in spec.factors, and the B factor.
struct TwoFactors {
    std::size_t main = 0, sub = 1;
    int a = 0, b = 0;
};

TwoFactors two_factors(const TrialSpec& spec, const char* design) {
    if (spec.factors.size() != 2)
        throw DesignError(fmt::format("factors: a {} needs exactly 2 [[factors]], got {}", design, spec.factors.size()));
    TwoFactors f;
    if (spec.factors[1].role == "main" || spec.factors[0].role == "sub") f.main = 1, f.sub = 0;
    f.a = static_cast<int>(spec.factors[f.main].levels.size());
    f.b = static_cast<int>(spec.factors[f.sub].levels.size());
    const std::size_t crossing = static_cast<std::size_t>(f.a) * static_cast<std::size_t>(f.b);
    if (spec.treatments.size() != crossing)
        throw DesignError(fmt::format("treatments: a {} has the {} x {} treatments of its factors' crossing, got {}",
                                      design, f.a, f.b, spec.treatments.size()));
    return f;
}

// Generator order (A level * b + B level) to the spec's crossing order (first factor slowest).
void map_two_factors(DesignAssignment& a, const TwoFactors& f) {
    for (DesignUnit& u : a.units) {
        const int la = u.treatment / f.b, lb = u.treatment % f.b;
        u.treatment = f.main == 0 ? la * f.b + lb : lb * f.a + la;
    }
}

}  // namespace

Layout design_trial(const TrialSpec& spec, std::uint64_t seed) {
    const std::string& d = spec.design;
    const auto& names = design_names();
    if (std::find(names.begin(), names.end(), d) == names.end())
        throw DesignError(fmt::format("trial.design: unknown design '{}'; accepted designs: {}", d, design_list()));
    check_labels(spec);
    const int t = static_cast<int>(spec.treatments.size());
    Rng rng(seed);
    DesignAssignment a;
    std::vector<std::string> notes;

    if (d == "rcbd") {
        need_blocks(spec, 2, "randomized complete block design");
        need_treatments(spec, 2, "randomized complete block design");
        a = rcbd_assignment(t, spec.blocks, plots_per_row(spec, t, t), rng);
    } else if (d == "crd") {
        need_treatments(spec, 2, "completely randomized design");
        if (spec.replicates < 2 || spec.replicates > kMaxBlocks)
            throw DesignError(fmt::format("trial.replicates: a completely randomized design needs 2 to {} replicates "
                                          "of each treatment, got {}", kMaxBlocks, spec.replicates));
        const int n = t * spec.replicates;
        a = crd_assignment(t, spec.replicates, plots_per_row(spec, crd_square_row(n), n), rng);
    } else if (d == "paired") {
        if (t != 2)
            throw DesignError(fmt::format("treatments: paired plots compare exactly 2 treatments, got {}", t));
        need_blocks(spec, 2, "paired-plot design", "pairs");
        a = paired_assignment(spec.blocks, rng);
    } else if (d == "latin") {
        if (!spec.second_gradient)
            throw DesignError("second_gradient: a Latin square needs a second gradient for its columns");
        const double apart = std::fabs(std::fmod(spec.second_gradient->bearing_deg - spec.gradient.bearing_deg + 540.0, 360.0) - 180.0);
        if (std::fabs(apart - 90.0) > kRightAngleToleranceDeg)
            throw DesignError(fmt::format("second_gradient.bearing_deg: the two gradients are {}° apart; a Latin square "
                                          "needs them at right angles (90° +/- {}°)", apart, kRightAngleToleranceDeg));
        if (t < kLatinMinSide || t > kLatinMaxSide)
            throw DesignError(fmt::format("treatments: a Latin square has as many rows and columns as treatments, "
                                          "{} to {}; got {}", kLatinMinSide, kLatinMaxSide, t));
        a = latin_square(t, rng);
        notes = latin_square_notes(t);
    } else if (d == "split" || d == "strip") {
        const char* name = d == "split" ? "split-plot design" : "strip-plot design";
        const TwoFactors f = two_factors(spec, name);
        need_blocks(spec, 2, name);
        a = d == "split" ? split_plot(f.a, f.b, spec.blocks, rng) : strip_plot(f.a, f.b, spec.blocks, rng);
        map_two_factors(a, f);
        notes = split_plot_notes(f.a, spec.blocks);
    } else if (d == "augmented") {
        std::vector<int> checks, entries;
        for (int i = 0; i < t; ++i) (spec.treatments[static_cast<std::size_t>(i)].check ? checks : entries).push_back(i);
        if (checks.empty())
            throw DesignError("treatments: an augmented design needs check entries (check = true) in every block; none given");
        if (entries.empty())
            throw DesignError("treatments: an augmented design needs new entries (without check = true); none given");
        need_blocks(spec, 2, "augmented design");
        a = augmented(static_cast<int>(checks.size()), static_cast<int>(entries.size()), spec.blocks, rng);
        const int c = static_cast<int>(checks.size());
        for (DesignUnit& u : a.units)
            u.treatment = u.treatment < c ? checks[static_cast<std::size_t>(u.treatment)]
                                          : entries[static_cast<std::size_t>(u.treatment - c)];
        notes = augmented_notes(c, static_cast<int>(entries.size()), spec.blocks);
    } else if (d == "alpha") {
        AlphaQuality q;
        a = alpha_design(AlphaParams{t, spec.block_size, spec.replicates}, rng, &q);
        notes.push_back(fmt::format(
            "Alpha design: efficiency factor {:.4f}, upper bound {:.4f} ({:.1f}% of the bound), {} entries in {} "
            "replicates of incomplete blocks of at most {} plots.",
            q.efficiency_factor, q.upper_bound, q.upper_bound > 0 ? 100 * q.efficiency_factor / q.upper_bound : 0.0,
            t, spec.replicates, spec.block_size));
    }

    Layout layout = place_on_field(spec, a, seed);
    layout.notes.insert(layout.notes.end(), notes.begin(), notes.end());
    return layout;
}

Layout design_rcbd(const TrialSpec& spec, std::uint64_t seed) {
    TrialSpec s = spec;
    s.design = "rcbd";
    return design_trial(s, seed);
}

int design_column(const PlotPlacement& p, const std::string& name) {
    if (name == "rep") return p.rep;
    if (name == "incomplete_block") return p.incomplete_block;
    if (name == "main") return p.main;
    if (name == "sub") return p.sub;
    if (name == "square_row") return p.square_row;
    if (name == "square_col") return p.square_col;
    throw DesignError("layout.columns: unknown design column '" + name +
                      "' (expected rep, incomplete_block, main, sub, square_row, square_col)");
}

}  // namespace pw
