// Reading a trial specification (docs/spec.md) from TOML text with toml++ into pw::TrialSpec.
//
// This is the only translation unit that includes toml++ (it is slow to compile). Every refusal is a
// SpecError whose `where` is "FILE:LINE" (the line of the offending key or value, or of the table header
// when a key is missing; just "FILE" when toml++ knows no line), whose `key` is the dotted path with
// 1-based indices into arrays ("traits[2].min" is `min` of the second [[traits]] table), and whose message
// says what was expected. Unknown keys are refused so a misspelt key is never silently ignored.
// Checks that only make sense for a particular design (at least two blocks, two treatments) belong to the
// design (core/design/); this file checks what the format itself promises.
#include "core/spec/trial_spec.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>
#include <string_view>

#include <fmt/format.h>
#include <toml++/toml.h>

#include "core/error.hpp"

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

std::optional<TraitKind> trait_kind_from_string(const std::string& name) {
    for (TraitKind k : {TraitKind::Number, TraitKind::Count, TraitKind::Score, TraitKind::Date, TraitKind::Text})
        if (name == to_string(k)) return k;
    return std::nullopt;
}

namespace {

constexpr const char* kDesignNames = "rcbd";  // accepted values of trial.design, comma-separated
constexpr int kMaxBlocks = 99;                 // plot ids are block * 100 (or 1000) + position
constexpr int kMaxTreatments = 999;
constexpr int kMaxDecimals = 6;
constexpr int kMaxTextLength = 2000;

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

void read_trial(const Reader& r, const toml::table& root, TrialSpec& spec) {
    const Scope s = r.req_table(root, "trial");
    r.only_keys(s, {"code", "title", "site", "crop", "design", "blocks", "seed", "blind"});

    spec.code = r.req_string(s, "code");
    if (!is_trial_code(spec.code))
        r.fail(*r.find(s, "code"), s.key("code"),
               fmt::format("'{}' is not a trial code; expected 2 to 10 upper-case letters or digits (A-Z, 0-9)", spec.code));
    spec.title = r.req_string(s, "title");
    spec.site = r.req_string(s, "site");
    spec.crop = r.req_string(s, "crop");

    spec.design = r.req_string(s, "design");
    const std::string name = lower(spec.design);
    bool known = false;
    for (std::string_view rest = kDesignNames; !rest.empty();) {
        const auto comma = rest.find(',');
        if (rest.substr(0, comma) == name) known = true;
        rest = comma == std::string_view::npos ? std::string_view{} : rest.substr(comma + 1);
    }
    if (!known)
        r.fail(*r.find(s, "design"), s.key("design"),
               fmt::format("unknown design '{}'; accepted designs: {}", spec.design, kDesignNames));
    spec.design = name;

    const std::int64_t blocks = r.req_integer(s, "blocks");
    if (blocks < 1 || blocks > kMaxBlocks)
        r.fail(*r.find(s, "blocks"), s.key("blocks"),
               fmt::format("expected a whole number of blocks from 1 to {}, got {}", kMaxBlocks, blocks));
    spec.blocks = static_cast<int>(blocks);

    if (auto seed = r.opt_integer(s, "seed")) {
        if (*seed < 0)
            r.fail(*r.find(s, "seed"), s.key("seed"), fmt::format("expected a non-negative whole number, got {}", *seed));
        spec.seed = static_cast<std::uint64_t>(*seed);
    }
    spec.blind = r.opt_bool(s, "blind").value_or(false);
}

void read_field(const Reader& r, const toml::table& root, FieldSpec& f) {
    const Scope s = r.req_table(root, "field");
    r.only_keys(s, {"plot_length_m", "plot_width_m", "alley_m", "plot_gap_m", "plots_per_row"});

    auto positive = [&](std::string_view k) {
        const double v = r.req_number(s, k);
        if (v <= 0) r.fail(*r.find(s, k), s.key(k), fmt::format("expected a length in metres greater than 0, got {}", show(v)));
        return v;
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
}

void read_gradient(const Reader& r, const toml::table& root, GradientSpec& g) {
    const Scope s = r.req_table(root, "gradient");
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

}  // namespace

TrialSpec parse_trial_spec(const std::string& toml_text, const std::string& source_name) {
    const Reader r(source_name);
    toml::table root;
    try {
        root = toml::parse(toml_text, source_name);
    } catch (const toml::parse_error& e) {
        throw SpecError(r.where(e.source()), "", fmt::format("not valid TOML: {}", e.description()));
    }
    r.only_keys(Scope{root, ""}, {"trial", "field", "gradient", "treatments", "traits"});

    TrialSpec spec;
    read_trial(r, root, spec);
    read_field(r, root, spec.field);
    read_gradient(r, root, spec.gradient);
    read_treatments(r, root, spec.treatments);
    read_traits(r, root, spec.traits);
    return spec;
}

}  // namespace pw
