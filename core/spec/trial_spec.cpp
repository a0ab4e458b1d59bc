// Reading a trial specification (docs/spec.md) from TOML text with toml++ into pw::TrialSpec.
//
// toml++ comes configured from tomlpp.hpp. Every refusal is a SpecError whose `where` is "FILE:LINE" (the
// line of the offending key or value, or of the table header when a key is missing; just "FILE" when toml++
// knows no line), whose `key` is the dotted path with 1-based indices into arrays ("traits[2].min" is `min`
// of the second [[traits]] table), and whose message says what was expected. Unknown keys are refused so a
// misspelt key is never silently ignored. Checks that only make sense for a particular design (at least two
// blocks, two treatments) belong to the design (core/design/); this file checks what the format promises.
#include "core/spec/trial_spec.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>
#include <sstream>
#include <string_view>

#include <fmt/format.h>

#include "core/error.hpp"
#include "core/spec/tomlpp.hpp"
#include "core/traits/yield.hpp"

namespace pw {

const char* to_string(TraitKind kind) {
    switch (kind) {
        case TraitKind::Number: return "number";
        case TraitKind::Count: return "count";
        case TraitKind::Score: return "score";
        case TraitKind::Date: return "date";
        case TraitKind::Text: return "text";
    }
    return "number";
}

const char* to_string(BorderKind kind) {
    switch (kind) {
        case BorderKind::None: return "none";
        case BorderKind::Around: return "around";
        case BorderKind::GradientEdges: return "gradient_edges";
    }
    return "none";
}

const char* to_string(YieldUnit unit) {
    switch (unit) {
        case YieldUnit::TonnesPerHectare: return "t/ha";
        case YieldUnit::KilogramsPerHectare: return "kg/ha";
        case YieldUnit::KilogramsPerPlot: return "kg";
    }
    return "t/ha";
}

const std::vector<std::string>& design_names() {
    static const std::vector<std::string> names = {"crd",    "rcbd",      "latin", "split",
                                                   "strip", "paired", "augmented", "alpha"};
    return names;
}

std::vector<TreatmentSpec> cross_factors(const std::vector<FactorSpec>& factors, const std::string& extra_control) {
    std::vector<TreatmentSpec> out;
    if (!factors.empty()) {
        // Odometer over the levels, last factor fastest (so the first factor is the slowest).
        std::vector<std::size_t> at(factors.size(), 0);
        for (;;) {
            TreatmentSpec t;
            for (std::size_t f = 0; f < factors.size(); ++f) {
                if (f) t.label += kFactorLabelSeparator;
                t.label += factors[f].levels.at(at[f]);
                t.description += (f ? ", " : "") + factors[f].name + " " + factors[f].levels.at(at[f]);
            }
            out.push_back(std::move(t));
            std::size_t f = factors.size();
            while (f > 0 && ++at[f - 1] == factors[f - 1].levels.size()) at[--f] = 0;
            if (f == 0) break;
        }
    }
    if (!extra_control.empty()) out.push_back({extra_control, "extra control", true});
    return out;
}

const std::vector<FlagSpec>& default_flags() {
    // Plot status with its cause is common practice (DOMAIN: "plot status normal/damaged/missing + cause");
    // lodging (stems leaning or fallen) is the commonest reason a cereal plot is flagged. A damaged or
    // lodged plot is still data; a missing plot has none.
    static const std::vector<FlagSpec> flags{
        {"damaged", "damaged", false},
        {"missing", "missing", true},
        {"lodged", "lodged", false},
    };
    return flags;
}

std::optional<TraitKind> trait_kind_from_string(const std::string& name) {
    for (TraitKind k : {TraitKind::Number, TraitKind::Count, TraitKind::Score, TraitKind::Date, TraitKind::Text})
        if (name == to_string(k)) return k;
    return std::nullopt;
}

namespace {

constexpr int kMaxBlocks = 99;                 // plot ids are block * 100 (or 1000) + position
constexpr int kMaxReplicates = 99;
constexpr int kMaxTreatments = 999;
constexpr int kMaxFactors = 3;
constexpr double kRightAngleToleranceDeg = 10.0;  // a Latin square's two gradients: 90° +/- this
constexpr int kMaxDecimals = 6;
constexpr int kMaxTextLength = 2000;
constexpr std::size_t kMaxFlags = 9;            // the handheld chooses a flag with one key, 1 to 9
constexpr std::size_t kMaxFlagName = 16;
constexpr std::size_t kMaxFlagLabel = 10;       // fits the 32-column screen beside its key and a marker

std::string trim(std::string_view s) {
    std::size_t b = 0, e = s.size();
    while (b < e && std::isspace(static_cast<unsigned char>(s[b]))) ++b;
    while (e > b && std::isspace(static_cast<unsigned char>(s[e - 1]))) --e;
    return std::string(s.substr(b, e - b));
}

std::string lower(std::string s) {
    for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    return s;
}

// Edit distance counting an insertion, deletion, substitution or swap of neighbours as one step (the
// "optimal string alignment" form of Damerau-Levenshtein), used only to suggest the key a typo meant.
std::size_t edit_distance(std::string_view a, std::string_view b) {
    std::vector<std::vector<std::size_t>> d(a.size() + 1, std::vector<std::size_t>(b.size() + 1));
    for (std::size_t i = 0; i <= a.size(); ++i) d[i][0] = i;
    for (std::size_t j = 0; j <= b.size(); ++j) d[0][j] = j;
    for (std::size_t i = 1; i <= a.size(); ++i)
        for (std::size_t j = 1; j <= b.size(); ++j) {
            d[i][j] = std::min({d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1)});
            if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
                d[i][j] = std::min(d[i][j], d[i - 2][j - 2] + 1);
        }
    return d[a.size()][b.size()];
}

std::string join(const std::vector<std::string_view>& items) {
    std::string out;
    for (auto s : items) {
        if (!out.empty()) out += ", ";
        out += s;
    }
    return out;
}

std::string show(double v) { return fmt::format("{}", v); }

std::string design_list() {
    std::string out;
    for (const auto& n : design_names()) out += (out.empty() ? "" : ", ") + n;
    return out;
}

// Angle between two compass bearings, 0..180 degrees.
double bearing_difference(double a_deg, double b_deg) {
    return std::fabs(std::fmod(a_deg - b_deg + 540.0, 360.0) - 180.0);
}

const char* type_name(const toml::node& n) {
    switch (n.type()) {
        case toml::node_type::string: return "a string";
        case toml::node_type::integer: return "an integer";
        case toml::node_type::floating_point: return "a decimal number";
        case toml::node_type::boolean: return "true/false";
        case toml::node_type::date: return "a date";
        case toml::node_type::time: return "a time";
        case toml::node_type::date_time: return "a date-time";
        case toml::node_type::array: return "an array";
        case toml::node_type::table: return "a table";
        default: return "nothing";
    }
}

// A table being read together with its dotted path, for error messages.
struct Scope {
    const toml::table& table;
    std::string path;     // "" for the root, "trial", "traits[2]"
    std::string key(std::string_view k) const { return path.empty() ? std::string(k) : path + "." + std::string(k); }
};

class Reader {
public:
    explicit Reader(std::string source) : source_(std::move(source)) {}

    std::string where(const toml::source_region& r) const {
        return r.begin.line > 0 ? fmt::format("{}:{}", source_, r.begin.line) : source_;
    }

    [[noreturn]] void fail(const toml::node& at, const std::string& key, const std::string& message) const {
        throw SpecError(where(at.source()), key, message);
    }
    [[noreturn]] void fail_at(const toml::source_region& r, const std::string& key, const std::string& message) const {
        throw SpecError(where(r), key, message);
    }

    // Refuses keys not in `allowed`, the first one in document order, with a suggestion for a near miss.
    void only_keys(const Scope& s, const std::vector<std::string_view>& allowed) const {
        const toml::key* worst = nullptr;
        for (auto&& [k, v] : s.table) {
            if (std::find(allowed.begin(), allowed.end(), k.str()) != allowed.end()) continue;
            if (!worst || k.source().begin.line < worst->source().begin.line) worst = &k;
        }
        if (!worst) return;
        std::string message = fmt::format("unknown key '{}'", worst->str());
        std::string_view best;
        std::size_t best_d = 3;
        for (auto a : allowed) {
            const std::size_t d = edit_distance(worst->str(), a);
            if (d < best_d) best = a, best_d = d;
        }
        if (!best.empty()) message += fmt::format(" (did you mean '{}'?)", best);
        message += fmt::format("; expected one of: {}", join(allowed));
        fail_at(worst->source(), s.key(worst->str()), message);
    }

    const toml::node* find(const Scope& s, std::string_view k) const { return s.table.get(k); }

    const toml::node& require(const Scope& s, std::string_view k, std::string_view expected) const {
        const toml::node* n = find(s, k);
        if (!n) fail_at(s.table.source(), s.key(k), fmt::format("missing; expected {}", expected));
        return *n;
    }

    std::string string_value(const toml::node& n, const std::string& key, bool allow_empty) const {
        const auto* v = n.as_string();
        if (!v) fail(n, key, fmt::format("expected a string in quotes, got {}", type_name(n)));
        std::string s = trim(v->get());
        if (!allow_empty && s.empty()) fail(n, key, "expected a non-empty string");
        return s;
    }
    std::string req_string(const Scope& s, std::string_view k) const {
        return string_value(require(s, k, "a non-empty string"), s.key(k), false);
    }
    std::optional<std::string> opt_string(const Scope& s, std::string_view k, bool allow_empty) const {
        const toml::node* n = find(s, k);
        if (!n) return std::nullopt;
        return string_value(*n, s.key(k), allow_empty);
    }

    double number_value(const toml::node& n, const std::string& key) const {
        double d = 0;
        if (const auto* i = n.as_integer()) d = static_cast<double>(i->get());
        else if (const auto* f = n.as_floating_point()) d = f->get();
        else fail(n, key, fmt::format("expected a number, got {}", type_name(n)));
        if (!std::isfinite(d)) fail(n, key, "expected a finite number (not inf or nan)");
        return d;
    }
    double req_number(const Scope& s, std::string_view k) const {
        return number_value(require(s, k, "a number"), s.key(k));
    }
    std::optional<double> opt_number(const Scope& s, std::string_view k) const {
        const toml::node* n = find(s, k);
        if (!n) return std::nullopt;
        return number_value(*n, s.key(k));
    }

    std::int64_t integer_value(const toml::node& n, const std::string& key) const {
        if (const auto* i = n.as_integer()) return i->get();
        fail(n, key, fmt::format("expected a whole number (an integer without a decimal point), got {}", type_name(n)));
    }
    std::int64_t req_integer(const Scope& s, std::string_view k) const {
        return integer_value(require(s, k, "a whole number"), s.key(k));
    }
    std::optional<std::int64_t> opt_integer(const Scope& s, std::string_view k) const {
        const toml::node* n = find(s, k);
        if (!n) return std::nullopt;
        return integer_value(*n, s.key(k));
    }

    std::optional<bool> opt_bool(const Scope& s, std::string_view k) const {
        const toml::node* n = find(s, k);
        if (!n) return std::nullopt;
        if (const auto* b = n->as_boolean()) return b->get();
        fail(*n, s.key(k), fmt::format("expected true or false, got {}", type_name(*n)));
    }

    Scope table(const toml::node& n, std::string path) const {
        const auto* t = n.as_table();
        if (!t) fail(n, path, fmt::format("expected a table, got {}", type_name(n)));
        return Scope{*t, std::move(path)};
    }

    // Top-level [name] table; missing -> error at the file.
    Scope req_table(const toml::table& root, std::string_view name) const {
        const toml::node* n = root.get(name);
        if (!n) throw SpecError(source_, std::string(name), fmt::format("missing table [{}]", name));
        return table(*n, std::string(name));
    }

    const toml::array& req_array_of_tables(const toml::table& root, std::string_view name) const {
        const toml::node* n = root.get(name);
        if (!n) throw SpecError(source_, std::string(name), fmt::format("missing; expected one or more [[{}]] tables", name));
        const auto* a = n->as_array();
        if (!a) fail(*n, std::string(name), fmt::format("expected [[{}]] tables, got {}", name, type_name(*n)));
        if (a->empty()) fail(*n, std::string(name), fmt::format("expected at least one [[{}]] table", name));
        return *a;
    }

    const std::string& source() const { return source_; }

private:
    std::string source_;
};

bool is_trial_code(std::string_view s) {
    if (s.size() < 2 || s.size() > 10) return false;
    return std::all_of(s.begin(), s.end(), [](char c) { return (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9'); });
}

bool is_trait_name(std::string_view s) {
    if (s.empty() || s.size() > 32 || !(s[0] >= 'a' && s[0] <= 'z')) return false;
    return std::all_of(s.begin(), s.end(),
                       [](char c) { return (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '_'; });
}

bool all_digits(std::string_view s) {
    std::size_t i = (!s.empty() && (s[0] == '-' || s[0] == '+')) ? 1 : 0;
    if (i == s.size()) return false;
    return std::all_of(s.begin() + static_cast<std::ptrdiff_t>(i), s.end(), [](char c) { return c >= '0' && c <= '9'; });
}

// Which [trial] keys each design uses: a key that belongs to another design is refused, so a setting that
// would be ignored is never silently accepted.
struct DesignKeys {
    bool blocks = false, replicates = false, block_size = false, factors_allowed = false, factors_required = false,
        extra_control = false, second_gradient = false;
};

DesignKeys keys_of(const std::string& design) {
    DesignKeys k;
    if (design == "crd") k.replicates = k.factors_allowed = k.extra_control = true;
    if (design == "rcbd") k.blocks = k.factors_allowed = k.extra_control = true;
    if (design == "latin") k.factors_allowed = k.extra_control = k.second_gradient = true;
    if (design == "split" || design == "strip") k.blocks = k.factors_allowed = k.factors_required = true;
    if (design == "paired" || design == "augmented") k.blocks = true;
    if (design == "alpha") k.replicates = k.block_size = true;
    return k;
}

void read_trial(const Reader& r, const toml::table& root, TrialSpec& spec) {
    const Scope s = r.req_table(root, "trial");
    r.only_keys(s, {"code", "title", "site", "crop", "design", "blocks", "replicates", "block_size", "extra_control",
                    "seed", "blind"});

    spec.code = r.req_string(s, "code");
    if (!is_trial_code(spec.code))
        r.fail(*r.find(s, "code"), s.key("code"),
               fmt::format("'{}' is not a trial code; expected 2 to 10 upper-case letters or digits (A-Z, 0-9)", spec.code));
    spec.title = r.req_string(s, "title");
    spec.site = r.req_string(s, "site");
    spec.crop = r.req_string(s, "crop");

    spec.design = r.req_string(s, "design");
    const std::string name = lower(spec.design);
    const auto& names = design_names();
    if (std::find(names.begin(), names.end(), name) == names.end())
        r.fail(*r.find(s, "design"), s.key("design"),
               fmt::format("unknown design '{}'; accepted designs: {}", spec.design, design_list()));
    spec.design = name;
    const DesignKeys k = keys_of(name);

    // A key another design uses: refused, naming the designs that do use it.
    auto not_here = [&](std::string_view key, bool used, std::string_view users) {
        if (const toml::node* n = r.find(s, key); n && !used)
            r.fail(*n, s.key(key), fmt::format("'{}' is not used by the {} design (it applies to {})", key, name, users));
    };
    not_here("blocks", k.blocks, "rcbd, split, strip, paired (pairs) and augmented");
    not_here("replicates", k.replicates, "crd and alpha");
    not_here("block_size", k.block_size, "alpha");
    not_here("extra_control", k.extra_control, "factorial crd, rcbd and latin designs");

    auto counted = [&](std::string_view key, std::int64_t lo, std::int64_t hi, std::string_view what) {
        const std::int64_t v = r.req_integer(s, key);
        if (v < lo || v > hi)
            r.fail(*r.find(s, key), s.key(key), fmt::format("expected a whole number of {} from {} to {}, got {}", what, lo, hi, v));
        return static_cast<int>(v);
    };
    if (k.blocks) spec.blocks = counted("blocks", 1, kMaxBlocks, name == "paired" ? "pairs (blocks)" : "blocks");
    if (k.replicates) spec.replicates = counted("replicates", 1, kMaxReplicates, "replicates");
    if (k.block_size) spec.block_size = counted("block_size", 2, kMaxTreatments, "plots per incomplete block");
    if (k.extra_control) spec.extra_control = r.opt_string(s, "extra_control", false).value_or("");

    if (auto seed = r.opt_integer(s, "seed")) {
        if (*seed < 0)
            r.fail(*r.find(s, "seed"), s.key("seed"), fmt::format("expected a non-negative whole number, got {}", *seed));
        spec.seed = static_cast<std::uint64_t>(*seed);
    }
    spec.blind = r.opt_bool(s, "blind").value_or(false);
}

void read_origin(const Reader& r, const Scope& field, OriginSpec& o) {
    const toml::node* n = r.find(field, "origin");
    if (!n) return;
    const Scope s = r.table(*n, field.key("origin"));
    r.only_keys(s, {"lat_deg", "lon_deg", "description"});
    o.lat_deg = r.opt_number(s, "lat_deg");
    o.lon_deg = r.opt_number(s, "lon_deg");
    if (o.lat_deg && (*o.lat_deg < -90 || *o.lat_deg > 90))
        r.fail(*r.find(s, "lat_deg"), s.key("lat_deg"),
               fmt::format("expected a latitude in degrees from -90 to 90, got {}", show(*o.lat_deg)));
    if (o.lon_deg && (*o.lon_deg < -180 || *o.lon_deg > 180))
        r.fail(*r.find(s, "lon_deg"), s.key("lon_deg"),
               fmt::format("expected a longitude in degrees from -180 to 180, got {}", show(*o.lon_deg)));
    if (o.lat_deg.has_value() != o.lon_deg.has_value()) {
        const char* missing = o.lat_deg ? "lon_deg" : "lat_deg";
        r.fail_at(s.table.source(), s.key(missing), "missing; latitude and longitude are given together or not at all");
    }
    o.description = r.opt_string(s, "description", true).value_or("");
}

void read_field(const Reader& r, const toml::table& root, FieldSpec& f) {
    const Scope s = r.req_table(root, "field");
    r.only_keys(s, {"plot_length_m", "plot_width_m", "alley_m", "plot_gap_m", "plots_per_row", "origin",
                    "x_bearing_deg", "length_m", "width_m", "border", "harvest_length_m", "harvest_width_m"});

    auto positive_value = [&](std::string_view k, double v) {
        if (v <= 0) r.fail(*r.find(s, k), s.key(k), fmt::format("expected a length in metres greater than 0, got {}", show(v)));
        return v;
    };
    auto positive = [&](std::string_view k) { return positive_value(k, r.req_number(s, k)); };
    auto opt_positive = [&](std::string_view k) -> std::optional<double> {
        if (auto v = r.opt_number(s, k)) return positive_value(k, *v);
        return std::nullopt;
    };
    auto non_negative = [&](std::string_view k, bool required) {
        const std::optional<double> v = required ? std::optional<double>(r.req_number(s, k)) : r.opt_number(s, k);
        if (v && *v < 0)
            r.fail(*r.find(s, k), s.key(k), fmt::format("expected a length in metres of 0 or more, got {}", show(*v)));
        return v.value_or(0.0);
    };
    f.plot_length_m = positive("plot_length_m");
    f.plot_width_m = positive("plot_width_m");
    f.alley_m = non_negative("alley_m", true);
    f.plot_gap_m = non_negative("plot_gap_m", false);
    const std::int64_t ppr = r.opt_integer(s, "plots_per_row").value_or(0);
    if (ppr < 0 || ppr > kMaxTreatments)
        r.fail(*r.find(s, "plots_per_row"), s.key("plots_per_row"),
               fmt::format("expected a whole number from 0 (whole block in one row) to {}, got {}", kMaxTreatments, ppr));
    f.plots_per_row = static_cast<int>(ppr);

    read_origin(r, s, f.origin);
    if (auto b = r.opt_number(s, "x_bearing_deg")) {
        if (*b < 0 || *b >= 360)
            r.fail(*r.find(s, "x_bearing_deg"), s.key("x_bearing_deg"),
                   fmt::format("expected a compass bearing in degrees, at least 0 and below 360, got {}", show(*b)));
        f.x_bearing_deg = *b;
    }
    f.length_m = opt_positive("length_m");
    f.width_m = opt_positive("width_m");
    if (auto b = r.opt_string(s, "border", false)) {
        bool known = false;
        for (BorderKind k : {BorderKind::None, BorderKind::Around, BorderKind::GradientEdges})
            if (*b == to_string(k)) f.border = k, known = true;
        if (!known)
            r.fail(*r.find(s, "border"), s.key("border"),
                   fmt::format("unknown border '{}'; expected one of none, around, gradient_edges", *b));
    }
    f.harvest_length_m = opt_positive("harvest_length_m");
    f.harvest_width_m = opt_positive("harvest_width_m");
    if (f.harvest_length_m && *f.harvest_length_m > f.plot_length_m)
        r.fail(*r.find(s, "harvest_length_m"), s.key("harvest_length_m"),
               fmt::format("the harvest area ({} m) cannot be longer than the plot (plot_length_m = {} m)",
                           show(*f.harvest_length_m), show(f.plot_length_m)));
    if (f.harvest_width_m && *f.harvest_width_m > f.plot_width_m)
        r.fail(*r.find(s, "harvest_width_m"), s.key("harvest_width_m"),
               fmt::format("the harvest area ({} m) cannot be wider than the plot (plot_width_m = {} m)",
                           show(*f.harvest_width_m), show(f.plot_width_m)));
}

void read_gradient(const Reader& r, const toml::table& root, GradientSpec& g, std::string_view table = "gradient") {
    const Scope s = r.req_table(root, table);
    r.only_keys(s, {"bearing_deg", "label"});
    g.bearing_deg = r.req_number(s, "bearing_deg");
    if (g.bearing_deg < 0 || g.bearing_deg >= 360)
        r.fail(*r.find(s, "bearing_deg"), s.key("bearing_deg"),
               fmt::format("expected a compass bearing in degrees, at least 0 and below 360, got {}", show(g.bearing_deg)));
    g.label = r.req_string(s, "label");
}

void read_treatments(const Reader& r, const toml::table& root, std::vector<TreatmentSpec>& out) {
    const toml::array& a = r.req_array_of_tables(root, "treatments");
    if (a.size() > static_cast<std::size_t>(kMaxTreatments))
        r.fail(a, "treatments", fmt::format("expected at most {} treatments, got {}", kMaxTreatments, a.size()));
    std::vector<const toml::node*> label_nodes;
    for (std::size_t i = 0; i < a.size(); ++i) {
        const Scope s = r.table(*a.get(i), fmt::format("treatments[{}]", i + 1));
        r.only_keys(s, {"label", "description", "check"});
        TreatmentSpec t;
        t.label = r.req_string(s, "label");
        const toml::node* label_node = r.find(s, "label");
        for (std::size_t j = 0; j < out.size(); ++j)
            if (lower(out[j].label) == lower(t.label))
                r.fail(*label_node, s.key("label"),
                       fmt::format("duplicate treatment label '{}'; treatments[{}] (line {}) has the same label "
                                   "(labels are compared ignoring case)",
                                   t.label, j + 1, label_nodes[j]->source().begin.line));
        t.description = r.opt_string(s, "description", true).value_or("");
        t.check = r.opt_bool(s, "check").value_or(false);
        out.push_back(std::move(t));
        label_nodes.push_back(label_node);
    }
}

void read_factors(const Reader& r, const toml::table& root, const std::string& design, bool split_roles,
                  std::vector<FactorSpec>& out) {
    const toml::array& a = r.req_array_of_tables(root, "factors");
    const std::size_t lo = 2, hi = split_roles ? 2 : kMaxFactors;
    if (a.size() < lo || a.size() > hi)
        r.fail(a, "factors",
               split_roles ? fmt::format("the {} design needs exactly 2 [[factors]] tables (A on main plots, B on "
                                         "subplots), got {}", design, a.size())
                           : fmt::format("expected 2 or 3 [[factors]] tables, got {} (a single factor is a list of "
                                         "[[treatments]])", a.size()));
    std::vector<const toml::node*> role_nodes;
    std::size_t crossing = 1;
    for (std::size_t i = 0; i < a.size(); ++i) {
        const Scope s = r.table(*a.get(i), fmt::format("factors[{}]", i + 1));
        r.only_keys(s, {"name", "levels", "role"});
        FactorSpec f;
        f.name = r.req_string(s, "name");
        for (std::size_t j = 0; j < out.size(); ++j)
            if (lower(out[j].name) == lower(f.name))
                r.fail(*r.find(s, "name"), s.key("name"),
                       fmt::format("duplicate factor name '{}'; factors[{}] has the same name", f.name, j + 1));
        const toml::node& ln = r.require(s, "levels", "an array of at least 2 level labels");
        const auto* levels = ln.as_array();
        if (!levels) r.fail(ln, s.key("levels"), fmt::format("expected an array of strings, got {}", type_name(ln)));
        if (levels->size() < 2)
            r.fail(ln, s.key("levels"), fmt::format("expected at least 2 levels, got {}", levels->size()));
        for (std::size_t j = 0; j < levels->size(); ++j) {
            const std::string key = fmt::format("{}[{}]", s.key("levels"), j + 1);
            std::string level = r.string_value(*levels->get(j), key, false);
            if (level.find(kFactorLabelSeparator) != std::string::npos)
                r.fail(*levels->get(j), key,
                       fmt::format("level '{}' contains the separator '{}' used to join levels into treatment labels",
                                   level, kFactorLabelSeparator));
            for (std::size_t m = 0; m < f.levels.size(); ++m)
                if (lower(f.levels[m]) == lower(level))
                    r.fail(*levels->get(j), key,
                           fmt::format("level '{}' repeats levels[{}] (levels are compared ignoring case)", level, m + 1));
            f.levels.push_back(std::move(level));
        }
        crossing *= f.levels.size();
        if (crossing > static_cast<std::size_t>(kMaxTreatments))
            r.fail(ln, s.key("levels"), fmt::format("the crossing of the factors has more than {} treatments", kMaxTreatments));
        if (const toml::node* rn = r.find(s, "role")) {
            if (!split_roles)
                r.fail(*rn, s.key("role"),
                       fmt::format("'role' is used only by the split and strip designs, not by {}", design));
            f.role = r.string_value(*rn, s.key("role"), false);
            if (f.role != "main" && f.role != "sub")
                r.fail(*rn, s.key("role"), fmt::format("unknown role '{}'; expected main or sub", f.role));
            for (std::size_t j = 0; j < out.size(); ++j)
                if (out[j].role == f.role)
                    r.fail(*rn, s.key("role"), fmt::format("factors[{}] already has role '{}'; expected one main and one sub",
                                                           j + 1, f.role));
        }
        role_nodes.push_back(r.find(s, "role"));
        out.push_back(std::move(f));
    }
    if (split_roles) {
        // Roles: both given, one given (the other takes the other role), or none (first = main, second = sub).
        if (out[0].role.empty() && out[1].role.empty()) out[0].role = "main";
        if (out[0].role.empty()) out[0].role = out[1].role == "main" ? "sub" : "main";
        if (out[1].role.empty()) out[1].role = out[0].role == "main" ? "sub" : "main";
    }
}

// Crossed labels cannot repeat (levels are unique within a factor and never contain the separator); the
// extra control could repeat one of them.
void check_extra_control(const Reader& r, const toml::table& root, const TrialSpec& spec) {
    if (spec.extra_control.empty()) return;
    for (std::size_t i = 0; i + 1 < spec.treatments.size(); ++i)
        if (lower(spec.treatments[i].label) == lower(spec.extra_control)) {
            const Scope s = r.table(*root.get("trial"), "trial");
            r.fail(*r.find(s, "extra_control"), s.key("extra_control"),
                   fmt::format("'{}' is also treatment {} of the crossing; expected a label of its own",
                               spec.extra_control, i + 1));
        }
}

void read_trait(const Reader& r, const Scope& s, TraitSpec& t) {
    r.only_keys(s, {"name", "label", "unit", "kind", "min", "max", "decimals", "labels", "max_length"});
    t.name = r.req_string(s, "name");
    if (!is_trait_name(t.name))
        r.fail(*r.find(s, "name"), s.key("name"),
               fmt::format("'{}' is not a trait name; expected a lower-case letter followed by lower-case letters, "
                           "digits or '_' (at most 32 characters), e.g. grain_kg",
                           t.name));
    t.label = r.opt_string(s, "label", false).value_or(t.name);

    const toml::node& kind_node = r.require(s, "kind", "one of number, count, score, date, text");
    const std::string kind = r.string_value(kind_node, s.key("kind"), false);
    const auto k = trait_kind_from_string(kind);
    if (!k) r.fail(kind_node, s.key("kind"), fmt::format("unknown kind '{}'; expected one of number, count, score, date, text", kind));
    t.kind = *k;

    // Keys that belong to other kinds are refused, so a misplaced setting is never silently ignored.
    auto only_for = [&](std::string_view key, std::initializer_list<TraitKind> kinds, std::string_view which) {
        const toml::node* n = r.find(s, key);
        if (n && std::find(kinds.begin(), kinds.end(), t.kind) == kinds.end())
            r.fail(*n, s.key(key), fmt::format("'{}' applies only to {} traits, not to a {} trait", key, which, kind));
    };
    only_for("min", {TraitKind::Number, TraitKind::Count, TraitKind::Score}, "number, count and score");
    only_for("max", {TraitKind::Number, TraitKind::Count, TraitKind::Score}, "number, count and score");
    only_for("decimals", {TraitKind::Number}, "number");
    only_for("labels", {TraitKind::Score}, "score");
    only_for("max_length", {TraitKind::Text}, "text");

    const bool needs_unit = t.kind == TraitKind::Number || t.kind == TraitKind::Count;
    if (needs_unit) {
        t.unit = r.req_string(s, "unit");
    } else {
        t.unit = r.opt_string(s, "unit", true).value_or("");
    }

    t.min = r.opt_number(s, "min");
    t.max = r.opt_number(s, "max");
    const bool integral = t.kind == TraitKind::Count || t.kind == TraitKind::Score;
    for (const char* key : {"min", "max"}) {
        const auto& v = std::string_view(key) == "min" ? t.min : t.max;
        if (!v) continue;
        if (integral && std::floor(*v) != *v)
            r.fail(*r.find(s, key), s.key(key), fmt::format("a {} trait needs a whole number here, got {}", kind, show(*v)));
        if (integral && std::fabs(*v) > 1e9)
            r.fail(*r.find(s, key), s.key(key), fmt::format("expected a whole number within +/-1e9, got {}", show(*v)));
    }
    if (t.kind == TraitKind::Count && t.min && *t.min < 0)
        r.fail(*r.find(s, "min"), s.key("min"), fmt::format("a count cannot be negative; expected min of 0 or more, got {}", show(*t.min)));
    if (t.kind == TraitKind::Score) {
        if (!t.min) r.require(s, "min", "the lowest score of the scale (a whole number)");
        if (!t.max) r.require(s, "max", "the highest score of the scale (a whole number)");
    }
    if (t.min && t.max && *t.min > *t.max)
        r.fail(*r.find(s, "min"), s.key("min"),
               fmt::format("min {} is greater than max {}; expected min <= max", show(*t.min), show(*t.max)));

    if (auto d = r.opt_integer(s, "decimals")) {
        if (*d < 0 || *d > kMaxDecimals)
            r.fail(*r.find(s, "decimals"), s.key("decimals"),
                   fmt::format("expected a whole number of decimals from 0 to {}, got {}", kMaxDecimals, *d));
        t.decimals = static_cast<int>(*d);
    }

    if (const toml::node* n = r.find(s, "labels")) {
        const auto* a = n->as_array();
        if (!a) r.fail(*n, s.key("labels"), fmt::format("expected an array of strings, got {}", type_name(*n)));
        const auto levels = static_cast<std::size_t>(*t.max - *t.min) + 1;
        if (a->size() != levels)
            r.fail(*n, s.key("labels"),
                   fmt::format("expected one label per score from {} to {} ({} labels), got {}", show(*t.min),
                               show(*t.max), levels, a->size()));
        for (std::size_t i = 0; i < a->size(); ++i) {
            const std::string key = fmt::format("{}[{}]", s.key("labels"), i + 1);
            std::string label = r.string_value(*a->get(i), key, false);
            if (all_digits(label))
                r.fail(*a->get(i), key, fmt::format("label '{}' is a number and would be confused with a score; expected words", label));
            for (std::size_t j = 0; j < t.score_labels.size(); ++j)
                if (lower(t.score_labels[j]) == lower(label))
                    r.fail(*a->get(i), key,
                           fmt::format("label '{}' repeats labels[{}] (labels are compared ignoring case)", label, j + 1));
            t.score_labels.push_back(std::move(label));
        }
    }

    if (auto m = r.opt_integer(s, "max_length")) {
        if (*m < 1 || *m > kMaxTextLength)
            r.fail(*r.find(s, "max_length"), s.key("max_length"),
                   fmt::format("expected a whole number of characters from 1 to {}, got {}", kMaxTextLength, *m));
        t.max_length = static_cast<int>(*m);
    }
}

void read_traits(const Reader& r, const toml::table& root, std::vector<TraitSpec>& out) {
    const toml::array& a = r.req_array_of_tables(root, "traits");
    std::vector<const toml::node*> name_nodes;
    for (std::size_t i = 0; i < a.size(); ++i) {
        const Scope s = r.table(*a.get(i), fmt::format("traits[{}]", i + 1));
        TraitSpec t;
        read_trait(r, s, t);
        const toml::node* name_node = r.find(s, "name");
        for (std::size_t j = 0; j < out.size(); ++j)
            if (out[j].name == t.name)
                r.fail(*name_node, s.key("name"),
                       fmt::format("duplicate trait name '{}'; traits[{}] (line {}) has the same name", t.name, j + 1,
                                   name_nodes[j]->source().begin.line));
        out.push_back(std::move(t));
        name_nodes.push_back(name_node);
    }
}

// Code points in a UTF-8 string (continuation bytes are not counted).
std::size_t code_points(std::string_view s) {
    return static_cast<std::size_t>(std::count_if(s.begin(), s.end(), [](char c) { return (c & 0xC0) != 0x80; }));
}

void read_flags(const Reader& r, const toml::table& root, std::vector<FlagSpec>& out) {
    const toml::array& a = r.req_array_of_tables(root, "flags");
    if (a.size() > kMaxFlags)
        r.fail(a, "flags", fmt::format("expected at most {} flags (the handheld chooses one with a single key, 1 to "
                                       "{}), got {}", kMaxFlags, kMaxFlags, a.size()));
    std::vector<const toml::node*> name_nodes;
    for (std::size_t i = 0; i < a.size(); ++i) {
        const Scope s = r.table(*a.get(i), fmt::format("flags[{}]", i + 1));
        r.only_keys(s, {"name", "label", "analysis"});
        FlagSpec f;
        f.name = r.req_string(s, "name");
        const toml::node& name_node = *r.find(s, "name");
        if (!is_trait_name(f.name) || f.name.size() > kMaxFlagName)
            r.fail(name_node, s.key("name"),
                   fmt::format("'{}' is not a flag name; expected a lower-case letter followed by lower-case "
                               "letters, digits or '_' (at most {} characters), e.g. lodged",
                               f.name, kMaxFlagName));
        if (f.name == "normal")
            r.fail(name_node, s.key("name"), "'normal' is the state of a plot without a flag; expected another name");
        for (std::size_t j = 0; j < out.size(); ++j)
            if (out[j].name == f.name)
                r.fail(name_node, s.key("name"),
                       fmt::format("duplicate flag name '{}'; flags[{}] (line {}) has the same name", f.name, j + 1,
                                   name_nodes[j]->source().begin.line));
        f.label = r.opt_string(s, "label", false).value_or(f.name);
        if (const toml::node* ln = r.find(s, "label")) {
            if (code_points(f.label) > kMaxFlagLabel)
                r.fail(*ln, s.key("label"),
                       fmt::format("'{}' is too long for the handheld's screen; expected at most {} characters",
                                   f.label, kMaxFlagLabel));
            if (std::any_of(f.label.begin(), f.label.end(), [](char c) { return c >= 0 && c < 32; }))
                r.fail(*ln, s.key("label"), "expected a label without control characters (tabs, line breaks)");
            for (std::size_t j = 0; j < out.size(); ++j)
                if (lower(out[j].label) == lower(f.label))
                    r.fail(*ln, s.key("label"),
                           fmt::format("label '{}' is also the label of flags[{}]; expected labels that tell the "
                                       "flags apart (compared ignoring case)", f.label, j + 1));
        } else if (f.name.size() > kMaxFlagLabel) {
            r.fail(name_node, s.key("label"),
                   fmt::format("missing; the name '{}' is longer than {} characters, so give a short label for the "
                               "handheld's screen", f.name, kMaxFlagLabel));
        }
        const toml::node& an = r.require(s, "analysis", "\"keep\" (the plot's values stay data) or \"missing\"");
        const std::string analysis = r.string_value(an, s.key("analysis"), false);
        if (analysis != "keep" && analysis != "missing")
            r.fail(an, s.key("analysis"),
                   fmt::format("unknown value '{}'; expected \"keep\" (the plot's values stay data, the flag is a "
                               "note) or \"missing\" (the plot is treated as missing)", analysis));
        f.missing = analysis == "missing";
        out.push_back(std::move(f));
        name_nodes.push_back(&name_node);
    }
}

// [[yields]]: read after the traits and the field, whose names, units and harvest area they resolve.
void read_yields(const Reader& r, const toml::table& root, TrialSpec& spec) {
    const toml::array& a = r.req_array_of_tables(root, "yields");
    auto trait_named = [&](const std::string& name) -> const TraitSpec* {
        for (const TraitSpec& t : spec.traits)
            if (t.name == name) return &t;
        return nullptr;
    };
    auto trait_names = [&] {
        std::vector<std::string_view> names;
        for (const TraitSpec& t : spec.traits) names.push_back(t.name);
        return join(names);
    };
    for (std::size_t i = 0; i < a.size(); ++i) {
        const Scope s = r.table(*a.get(i), fmt::format("yields[{}]", i + 1));
        r.only_keys(s, {"name", "label", "weight", "moisture", "standard_moisture_pct", "unit"});
        YieldSpec y;
        y.name = r.req_string(s, "name");
        const toml::node& name_node = *r.find(s, "name");
        if (!is_trait_name(y.name))
            r.fail(name_node, s.key("name"),
                   fmt::format("'{}' is not a yield name; expected a lower-case letter followed by lower-case letters, "
                               "digits or '_' (at most 32 characters), e.g. yield_t_ha",
                               y.name));
        if (trait_named(y.name))
            r.fail(name_node, s.key("name"), fmt::format("'{}' is already the name of a trait; a yield needs its own name", y.name));
        for (std::size_t j = 0; j < spec.yields.size(); ++j)
            if (spec.yields[j].name == y.name)
                r.fail(name_node, s.key("name"), fmt::format("duplicate yield name '{}'; yields[{}] has the same name", y.name, j + 1));
        y.label = r.opt_string(s, "label", false).value_or(y.name);

        // The weight: a number trait weighed in kg or g.
        y.weight = r.req_string(s, "weight");
        const TraitSpec* w = trait_named(y.weight);
        if (!w)
            r.fail(*r.find(s, "weight"), s.key("weight"),
                   fmt::format("no trait named '{}'; expected the number trait that holds the plot's harvested "
                               "weight (traits: {})", y.weight, trait_names()));
        if (w->kind != TraitKind::Number || (w->unit != "kg" && w->unit != "g"))
            r.fail(*r.find(s, "weight"), s.key("weight"),
                   fmt::format("trait '{}' is a {} trait in '{}'; expected a number trait with unit \"kg\" or \"g\"",
                               w->name, to_string(w->kind), w->unit));
        y.weight_kg_per_unit = w->unit == "g" ? 0.001 : 1.0;

        // The moisture and its standard basis: both or neither.
        const toml::node* basis_node = r.find(s, "standard_moisture_pct");
        if (auto m = r.opt_string(s, "moisture", false)) {
            y.moisture = *m;
            const TraitSpec* mt = trait_named(y.moisture);
            const toml::node& mn = *r.find(s, "moisture");
            if (!mt)
                r.fail(mn, s.key("moisture"),
                       fmt::format("no trait named '{}'; expected the number trait that holds the grain's moisture in "
                                   "% (traits: {})", y.moisture, trait_names()));
            if (mt->kind != TraitKind::Number || mt->unit != "%")
                r.fail(mn, s.key("moisture"),
                       fmt::format("trait '{}' is a {} trait in '{}'; expected a number trait with unit \"%\" (moisture "
                                   "as a percentage of the wet weight)", mt->name, to_string(mt->kind), mt->unit));
            if (!mt->min || *mt->min < 0 || !mt->max || *mt->max >= 100)
                r.fail(mn, s.key("moisture"),
                       fmt::format("trait '{}' needs min >= 0 and max below 100 so that every recorded moisture can be "
                                   "adjusted (a moisture of 100 % leaves no grain); e.g. min = 5, max = 40", mt->name));
            if (basis_node) {
                const double b = r.number_value(*basis_node, s.key("standard_moisture_pct"));
                if (b < 0 || b >= 100)
                    r.fail(*basis_node, s.key("standard_moisture_pct"),
                           fmt::format("expected a moisture from 0 to below 100 %, got {}", show(b)));
                y.standard_moisture_pct = b;
                y.basis_origin = "set in the spec";
            } else if (auto d = moisture_basis_for_crop(spec.crop)) {
                y.standard_moisture_pct = d->percent;
                y.basis_origin = fmt::format("default for {}: {}", d->names.front(), d->origin);
            } else {
                r.fail(mn, s.key("standard_moisture_pct"),
                       fmt::format("missing; plotwright has no standard moisture for the crop '{}' (trial.crop); give "
                                   "the basis to adjust to, e.g. standard_moisture_pct = 14",
                                   spec.crop));
            }
        } else if (basis_node) {
            r.fail(*basis_node, s.key("standard_moisture_pct"),
                   "a standard moisture needs the recorded moisture to adjust from; add moisture = \"TRAIT\"");
        }

        // The unit, and for a unit per area the net harvest area.
        const std::string unit = r.opt_string(s, "unit", false).value_or("t/ha");
        bool known = false;
        for (YieldUnit u : {YieldUnit::TonnesPerHectare, YieldUnit::KilogramsPerHectare, YieldUnit::KilogramsPerPlot})
            if (unit == to_string(u)) y.unit = u, known = true;
        if (!known)
            r.fail(*r.find(s, "unit"), s.key("unit"),
                   fmt::format("unknown unit '{}'; expected t/ha, kg/ha or kg (the adjusted weight of the plot)", unit));
        if (y.unit != YieldUnit::KilogramsPerPlot) {
            if (!spec.field.harvest_length_m || !spec.field.harvest_width_m)
                r.fail_at(s.table.source(), s.key("unit"),
                          fmt::format("a yield in {} needs the net harvest area: give field.harvest_length_m and "
                                   "field.harvest_width_m (the plot's own size when the whole plot is harvested)",
                                   unit));
            y.area_m2 = *spec.field.harvest_length_m * *spec.field.harvest_width_m;
        }
        spec.yields.push_back(std::move(y));
    }
}

// The document as a TOML table; a syntax error is a SpecError at its line.
toml::table parse_toml(const Reader& r, const std::string& toml_text, const std::string& source_name) {
    try {
        return toml::parse(toml_text, source_name);
    } catch (const toml::parse_error& e) {
        throw SpecError(r.where(e.source()), "", fmt::format("not valid TOML: {}", e.description()));
    }
}

// True when `name` is in `text` as a whole word (not inside a longer run of letters and digits), ignoring
// ASCII case.
bool names_word(std::string_view text, std::string_view name) {
    if (name.empty()) return false;
    auto lower = [](char c) { return static_cast<char>(std::tolower(static_cast<unsigned char>(c))); };
    auto alnum = [](char c) { return std::isalnum(static_cast<unsigned char>(c)) != 0; };
    for (std::size_t i = 0; i + name.size() <= text.size(); ++i) {
        std::size_t k = 0;
        while (k < name.size() && lower(text[i + k]) == lower(name[k])) ++k;
        if (k == name.size() && (i == 0 || !alnum(text[i - 1])) &&
            (i + k == text.size() || !alnum(text[i + k])))
            return true;
    }
    return false;
}

// On a blind trial an added trait's texts reach the handhelds (docs/station.md): none may name a treatment
// or a factor level.
void refuse_treatment_names(const Reader& r, const toml::table& table, std::size_t index, const TraitSpec& t,
                            const TrialSpec& trial) {
    std::vector<std::string_view> names;
    for (const TreatmentSpec& tr : trial.treatments) names.push_back(tr.label);
    for (const FactorSpec& f : trial.factors)
        for (const std::string& level : f.levels) names.push_back(level);
    auto check = [&](const char* key, const std::string& text) {
        for (std::string_view name : names)
            if (names_word(text, name)) {
                const toml::node* at = table.get(key);
                r.fail(at ? *at : static_cast<const toml::node&>(table), fmt::format("traits[{}].{}", index + 1, key),
                       fmt::format("'{}' names the treatment '{}'; trial {} is blind and an added trait's texts reach "
                                   "its handhelds: leave treatment names out",
                                   text, name, trial.code));
            }
    };
    check("label", t.label);
    check("unit", t.unit);
    for (const std::string& l : t.score_labels) check("labels", l);
}

}  // namespace

std::vector<AddedTraitTable> parse_added_traits(const std::string& toml_text, const std::string& source_name,
                                                const TrialSpec& trial) {
    const Reader r(source_name);
    const toml::table root = parse_toml(r, toml_text, source_name);
    // Only traits: the rest of the trial (treatments, layout, flags, yields) is fixed once it is designed.
    r.only_keys(Scope{root, ""}, {"traits"});
    std::vector<TraitSpec> traits;
    read_traits(r, root, traits);
    const toml::array& a = *root.get("traits")->as_array();
    std::vector<std::string_view> names;
    for (const TraitSpec& t : trial.traits) names.push_back(t.name);
    std::vector<AddedTraitTable> out;
    for (std::size_t i = 0; i < traits.size(); ++i) {
        const toml::table& table = *a.get(i)->as_table();
        const toml::node& name_node = *table.get("name");
        const std::string key = fmt::format("traits[{}].name", i + 1);
        for (const TraitSpec& t : trial.traits)
            if (t.name == traits[i].name)
                r.fail(name_node, key,
                       fmt::format("trial {} already has a trait named '{}' (its traits: {}); an added trait needs a "
                                   "name of its own",
                                   trial.code, t.name, join(names)));
        for (const YieldSpec& y : trial.yields)
            if (y.name == traits[i].name)
                r.fail(name_node, key,
                       fmt::format("'{}' is the name of a yield of trial {}; an added trait needs a name of its own",
                                   y.name, trial.code));
        // The table on its own, written by toml++ from the parsed values (comments are not kept: on a blind
        // trial the text travels to the handhelds).
        toml::table doc;
        doc.insert("traits", toml::array{table});
        std::ostringstream text;
        text << toml::toml_formatter{doc};
        out.push_back({std::move(traits[i]), text.str() + "\n"});
    }
    return out;
}

void refuse_treatment_names_in_added_traits(const std::string& toml_text, const std::string& source_name,
                                            const TrialSpec& trial) {
    if (!trial.blind) return;
    const std::vector<AddedTraitTable> tables = parse_added_traits(toml_text, source_name, trial);
    const Reader r(source_name);
    const toml::table root = parse_toml(r, toml_text, source_name);
    const toml::array& a = *root.get("traits")->as_array();
    for (std::size_t i = 0; i < tables.size(); ++i)
        refuse_treatment_names(r, *a.get(i)->as_table(), i, tables[i].trait, trial);
}

TrialSpec parse_trial_spec(const std::string& toml_text, const std::string& source_name) {
    const Reader r(source_name);
    const toml::table root = parse_toml(r, toml_text, source_name);
    r.only_keys(Scope{root, ""}, {"trial", "field", "gradient", "second_gradient", "factors", "treatments", "traits",
                                  "flags", "yields"});

    TrialSpec spec;
    read_trial(r, root, spec);
    const DesignKeys k = keys_of(spec.design);
    read_field(r, root, spec.field);
    read_gradient(r, root, spec.gradient);

    if (const toml::node* n = root.get("second_gradient"); n && !k.second_gradient)
        r.fail(*n, "second_gradient", fmt::format("[second_gradient] is used only by the latin design, not by {}", spec.design));
    if (k.second_gradient) {
        if (!root.get("second_gradient"))
            throw SpecError(source_name, "second_gradient",
                            "missing table [second_gradient]; a Latin square's columns follow a second gradient at "
                            "right angles to the first");
        GradientSpec g;
        read_gradient(r, root, g, "second_gradient");
        const double angle = bearing_difference(g.bearing_deg, spec.gradient.bearing_deg);
        if (std::fabs(angle - 90.0) > kRightAngleToleranceDeg) {
            const Scope s = r.table(*root.get("second_gradient"), "second_gradient");
            r.fail(*r.find(s, "bearing_deg"), s.key("bearing_deg"),
                   fmt::format("the second gradient (bearing {}) is {}° from the first (bearing {}); expected right "
                               "angles, 90° +/- {}°",
                               show(g.bearing_deg), show(angle), show(spec.gradient.bearing_deg), show(kRightAngleToleranceDeg)));
        }
        spec.second_gradient = g;
    }

    const toml::node* factors = root.get("factors");
    if (factors && !k.factors_allowed)
        r.fail(*factors, "factors",
               fmt::format("[[factors]] are not used by the {} design (they apply to crd, rcbd, latin, split and strip)",
                           spec.design));
    if (factors && root.get("treatments"))
        r.fail(*root.get("treatments"), "treatments",
               "give either [[treatments]] or [[factors]] (whose crossing makes the treatments), not both");
    if (k.factors_required && !factors)
        throw SpecError(source_name, "factors",
                        fmt::format("missing; the {} design needs two [[factors]] tables (A on main plots, B on subplots)",
                                    spec.design));
    if (factors) {
        read_factors(r, root, spec.design, spec.design == "split" || spec.design == "strip", spec.factors);
        spec.treatments = cross_factors(spec.factors, spec.extra_control);
        check_extra_control(r, root, spec);
    } else {
        if (!spec.extra_control.empty()) {
            const Scope s = r.table(*root.get("trial"), "trial");
            r.fail(*r.find(s, "extra_control"), "trial.extra_control",
                   "an extra control is added to the crossing of [[factors]]; with [[treatments]] list it as a "
                   "treatment with check = true");
        }
        read_treatments(r, root, spec.treatments);
    }
    read_traits(r, root, spec.traits);
    if (root.get("flags")) {
        spec.flags.clear();
        read_flags(r, root, spec.flags);
    }
    if (root.get("yields")) read_yields(r, root, spec);
    return spec;
}

}  // namespace pw
