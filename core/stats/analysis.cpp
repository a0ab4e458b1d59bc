// analyze_trial (analysis.hpp): one model per design, fitted by the least-squares engine, turned into an
// analysis of variance with error strata, least-squares means with standard errors and comparisons, the
// relative efficiency of the design and the fit of every plot.
//
// Steps: check the roles the design needs and the records (labels, duplicate cells) → number every label
// in order of first appearance → one factor per role, plus the treatment structure's factors → the
// design's terms (see analysis.hpp) → fit the observed plots → rows and strata → means → the rest.
//
// Least-squares means (Searle, Speed & Milliken 1980, "Population marginal means in the linear model",
// The American Statistician 34, 216–221): the treatment's prediction averaged with equal weight over the
// combinations of the design's nuisance factors (block; row and column; replicate and block) that occur
// among the observed plots. For complete data these are the arithmetic treatment means; for an RCBD with
// missing plots they are the means of the table with Yates' estimates inserted. Var = MS(error)·l'Gl.
// A table of a factor or interaction averages the treatment means with that level (equal weights).
#include "core/stats/analysis.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <set>
#include <unordered_map>

#include "core/error.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/stats/anova.hpp"
#include "core/stats/comparisons.hpp"
#include "core/stats/linear_model.hpp"

namespace pw {

namespace {

std::string quoted(const std::string& s) { return "\"" + s + "\""; }

// Labels in first-appearance order with their index.
struct LabelIndex {
    std::vector<std::string> names;
    std::unordered_map<std::string, int> index;
    int add(const std::string& name) {
        auto [it, inserted] = index.emplace(name, static_cast<int>(names.size()));
        if (inserted) names.push_back(name);
        return it->second;
    }
};

const char* kDesigns[] = {"crd", "rcbd", "latin", "split", "strip", "paired", "augmented", "alpha"};

std::string role_name(const TrialData& d, const std::string& role) {
    auto it = d.role_names.find(role);
    return it == d.role_names.end() ? role : it->second;
}

std::string record_name(const TrialData& d, std::size_t i) {
    if (i < d.plot.size() && !d.plot[i].empty()) return "plot " + d.plot[i];
    return "record " + std::to_string(i + 1);
}

// Everything built from the records before fitting.
struct Model {
    lm::ModelData all;                 // every record (missing plots too); y unused here
    std::vector<lm::Term> terms;
    std::vector<std::string> sources;  // ANOVA source of each term
    std::vector<int> nuisance;         // factor indices averaged over by the least-squares means
    std::vector<int> structure;        // factors that are functions of the treatment (incl. the treatment)
    int treatment_factor = -1;
    std::vector<int> crossing;         // the factorial's own factors (split/strip: {A, B}); empty if none
    int first_structure_term = 0;      // index of the first treatment-structure term
    std::map<std::string, std::string> error_of;  // term source → error row source
    std::map<std::string, std::string> stratum_of;
    std::set<std::string> error_terms;            // terms that are error rows (block:A ...)
    std::string residual_name = "residual";
    std::string residual_stratum;
    std::vector<std::pair<std::string, int>> role_factor;  // role → factor, for the plot table
};

int add_factor(Model& m, const std::string& name, const std::vector<std::string>& labels) {
    lm::Factor f;
    f.name = name;
    LabelIndex li;
    f.code.reserve(labels.size());
    for (const auto& l : labels) f.code.push_back(l.empty() ? -1 : li.add(l));
    f.labels = li.names;
    m.all.factors.push_back(std::move(f));
    return static_cast<int>(m.all.factors.size()) - 1;
}

int add_term(Model& m, const std::string& source, std::vector<int> factors, std::vector<int> marginal = {}) {
    m.terms.push_back({source, std::move(factors), std::move(marginal)});
    m.sources.push_back(source);
    return static_cast<int>(m.terms.size()) - 1;
}

// Every subset of the factorial's factors, by degree, then in the factors' order (R's term order).
std::vector<std::vector<int>> interaction_subsets(int k) {
    std::vector<std::vector<int>> out;
    for (int degree = 1; degree <= k; ++degree) {
        std::vector<int> pick(degree);
        std::iota(pick.begin(), pick.end(), 0);
        while (true) {
            out.push_back(pick);
            int i = degree - 1;
            while (i >= 0 && pick[i] == k - degree + i) --i;
            if (i < 0) break;
            ++pick[i];
            for (int j = i + 1; j < degree; ++j) pick[j] = pick[j - 1] + 1;
        }
    }
    return out;
}

std::string join(const std::vector<std::string>& v, const std::string& sep) {
    std::string s;
    for (std::size_t i = 0; i < v.size(); ++i) s += (i ? sep : "") + v[i];
    return s;
}

void require_column(const TrialData& d, const std::vector<std::string>& col, const std::string& role) {
    if (col.empty()) {
        throw InputError("the " + d.design + " design needs the " + role_name(d, role) + " of every plot; none given");
    }
    if (col.size() != d.y.size()) {
        throw InputError(role_name(d, role) + ": " + std::to_string(col.size()) + " labels for " +
                         std::to_string(d.y.size()) + " plots");
    }
    for (std::size_t i = 0; i < col.size(); ++i) {
        if (col[i].empty()) {
            throw InputError(record_name(d, i) + ": the " + role_name(d, role) +
                             " label is empty; every plot needs one");
        }
    }
}

// Refuses two records of one cell (the cell named by the given roles).
void require_unique(const TrialData& d, const std::vector<const std::vector<std::string>*>& cols,
                    const std::vector<std::string>& roles, const std::string& why) {
    std::map<std::vector<std::string>, std::size_t> seen;
    for (std::size_t i = 0; i < d.y.size(); ++i) {
        std::vector<std::string> key;
        for (auto* c : cols) key.push_back((*c)[i]);
        auto [it, fresh] = seen.emplace(key, i);
        if (!fresh) {
            std::string cell;
            for (std::size_t k = 0; k < roles.size(); ++k) {
                cell += (k ? ", " : "") + role_name(d, roles[k]) + " " + quoted(key[k]);
            }
            throw InputError(cell + ": duplicate plot (" + record_name(d, it->second) + " and " + record_name(d, i) +
                             "); " + why);
        }
    }
}

void require_levels(const TrialData& d, const std::vector<std::string>& col, const std::string& role, int least,
                    const std::string& what) {
    std::set<std::string> s(col.begin(), col.end());
    s.erase("");
    if (static_cast<int>(s.size()) < least) {
        throw InputError("the " + d.design + " design needs at least " + std::to_string(least) + " " + what + " (" +
                         role_name(d, role) + "); the data have " + std::to_string(s.size()) +
                         (s.size() == 1 ? " (" + quoted(*s.begin()) + ")" : std::string()));
    }
}

// The treatment structure: one treatment factor, or the factorial's factors and interactions.
void add_structure(Model& m, const TrialData& d, std::vector<int> factors) {
    m.first_structure_term = static_cast<int>(m.terms.size());
    if (factors.empty()) {
        add_term(m, "treatment", {m.treatment_factor});
        return;
    }
    // Records outside the crossing (extra control): a "control vs factorial" term first.
    std::vector<std::string> group(d.y.size());
    bool control = false;
    for (std::size_t i = 0; i < d.y.size(); ++i) {
        const bool outside = m.all.factors[factors[0]].code[i] < 0;
        control = control || outside;
        group[i] = outside ? "control" : "factorial";
    }
    std::vector<int> marg;
    if (control) {
        const int g = add_factor(m, "control vs factorial", group);
        m.structure.push_back(g);
        marg.push_back(add_term(m, "control vs factorial", {g}));
    }
    for (const auto& subset : interaction_subsets(static_cast<int>(factors.size()))) {
        std::vector<int> fs;
        std::vector<std::string> names;
        for (int k : subset) {
            fs.push_back(factors[k]);
            names.push_back(m.all.factors[factors[k]].name);
        }
        add_term(m, join(names, ":"), fs, marg);
    }
}

Model build_model(const TrialData& d) {
    const std::string& design = d.design;
    Model m;
    const std::size_t n = d.y.size();
    require_column(d, d.treatment, "treatment");
    m.treatment_factor = add_factor(m, "treatment", d.treatment);
    m.structure.push_back(m.treatment_factor);

    // Factorial factors (and split/strip's two).
    std::vector<int> fac;
    if (!d.factor_names.empty()) {
        if (d.factor_levels.size() != d.factor_names.size()) {
            throw InputError("factorial treatments: " + std::to_string(d.factor_names.size()) + " factor names but " +
                             std::to_string(d.factor_levels.size()) + " level columns");
        }
        for (std::size_t k = 0; k < d.factor_names.size(); ++k) {
            const auto& col = d.factor_levels[k];
            if (col.size() != n) {
                throw InputError("factor " + d.factor_names[k] + ": " + std::to_string(col.size()) + " levels for " +
                                 std::to_string(n) + " plots");
            }
            for (std::size_t i = 0; i < n; ++i) {
                const bool outside = d.factor_levels[0][i].empty();
                if (col[i].empty() != outside) {
                    throw InputError(record_name(d, i) + ": factor " + d.factor_names[k] +
                                     (col[i].empty() ? " has no level" : " has a level") +
                                     " while factor " + d.factor_names[0] + (outside ? " has none" : " has one") +
                                     "; a plot is either in the factorial crossing (a level of every factor) or "
                                     "outside it (an extra control, no level of any)");
                }
            }
            require_levels(d, col, d.factor_names[k], 2, "levels of factor " + d.factor_names[k]);
            fac.push_back(add_factor(m, d.factor_names[k], col));
            m.structure.push_back(fac.back());
        }
        m.crossing = fac;
    }

    auto nuisance = [&](const std::string& role, const std::vector<std::string>& col) {
        const int f = add_factor(m, role, col);
        m.nuisance.push_back(f);
        m.role_factor.push_back({role, f});
        return f;
    };

    if (design == "crd") {
        require_levels(d, d.treatment, "treatment", 2, "treatments");
        add_structure(m, d, fac);
    } else if (design == "rcbd" || design == "paired") {
        require_column(d, d.block, "block");
        const std::string unit = design == "rcbd" ? "an RCBD" : "a paired design";
        require_levels(d, d.block, "block", 2, design == "rcbd" ? "blocks" : "pairs");
        require_levels(d, d.treatment, "treatment", 2, "treatments");
        require_unique(d, {&d.block, &d.treatment}, {"block", "treatment"},
                       unit + " has exactly one plot of each treatment in each " +
                           (design == "rcbd" ? "block" : "pair"));
        if (design == "paired") {
            std::set<std::string> t(d.treatment.begin(), d.treatment.end());
            if (t.size() != 2) {
                throw InputError("a paired design compares exactly 2 treatments (" + role_name(d, "treatment") +
                                 "); the data have " + std::to_string(t.size()));
            }
        }
        const int b = nuisance("block", d.block);
        add_term(m, "block", {b});
        add_structure(m, d, design == "rcbd" ? fac : std::vector<int>{});
    } else if (design == "latin") {
        require_column(d, d.row, "row");
        require_column(d, d.col, "col");
        require_levels(d, d.treatment, "treatment", 2, "treatments");
        require_unique(d, {&d.row, &d.col}, {"row", "col"}, "a Latin square has one plot in each row and column");
        const int r = nuisance("row", d.row);
        const int c = nuisance("col", d.col);
        add_term(m, "row", {r});
        add_term(m, "column", {c});
        add_structure(m, d, fac);
    } else if (design == "split" || design == "strip") {
        require_column(d, d.block, "block");
        require_levels(d, d.block, "block", 2, "blocks");
        if (fac.size() != 2) {
            throw InputError("the " + design + " design needs two treatment factors, the main (" +
                             role_name(d, "main") + ") and the sub factor (" + role_name(d, "sub") + ")");
        }
        for (std::size_t i = 0; i < n; ++i) {
            if (d.factor_levels[0][i].empty()) {
                throw InputError(record_name(d, i) + ": no level of the main factor " + d.factor_names[0] +
                                 "; every plot of a " + design + "-plot design has a level of both factors");
            }
        }
        require_unique(d, {&d.block, &d.factor_levels[0], &d.factor_levels[1]},
                       {"block", "main", "sub"}, "each combination of the two factors has one plot in each block");
        const int b = nuisance("block", d.block);
        const int a = fac[0], s = fac[1];
        const std::string an = d.factor_names[0], sn = d.factor_names[1];
        const bool split = design == "split";
        m.first_structure_term = 1;
        add_term(m, "block", {b});
        add_term(m, an, {a});
        const std::string ea = split ? "residual (whole plot)" : "residual (main strips)";
        add_term(m, ea, {b, a});
        add_term(m, sn, {s});
        std::string eb;
        if (!split) {
            eb = "residual (sub strips)";
            add_term(m, eb, {b, s});
        }
        add_term(m, an + ":" + sn, {a, s});
        m.residual_name = split ? "residual (subplot)" : "residual (intersection)";
        m.residual_stratum = split ? "subplot" : "intersection";
        m.error_terms = {ea};
        if (!split) m.error_terms.insert(eb);
        m.stratum_of = {{"block", "block"}, {an, split ? "whole plot" : "main strips"},
                        {ea, split ? "whole plot" : "main strips"}, {sn, split ? "subplot" : "sub strips"},
                        {an + ":" + sn, split ? "subplot" : "intersection"}};
        if (!split) m.stratum_of[eb] = "sub strips";
        m.error_of = {{an, ea}, {sn, split ? m.residual_name : eb}, {an + ":" + sn, m.residual_name}};
    } else if (design == "augmented") {
        require_column(d, d.block, "block");
        require_levels(d, d.block, "block", 2, "blocks");
        require_unique(d, {&d.block, &d.treatment}, {"block", "treatment"},
                       "an augmented design has each check once in every block and each new entry once");
        std::set<std::string> checks(d.checks.begin(), d.checks.end());
        std::set<std::string> entries(d.treatment.begin(), d.treatment.end());
        for (const auto& c : checks) {
            if (!entries.count(c)) {
                throw InputError("check " + quoted(c) + " is not among the entries of " + role_name(d, "treatment"));
            }
        }
        if (checks.empty()) {  // entries in more than one block are the checks
            std::map<std::string, int> count;
            for (const auto& t : d.treatment) ++count[t];
            for (const auto& [t, k] : count) {
                if (k >= 2) checks.insert(t);
            }
        }
        if (checks.empty()) {
            throw InputError("an augmented design needs check entries repeated in the blocks; no entry of " +
                             role_name(d, "treatment") + " occurs in more than one block");
        }
        std::vector<std::string> group(n), check(n);
        for (std::size_t i = 0; i < n; ++i) {
            const bool is_check = checks.count(d.treatment[i]) > 0;
            group[i] = is_check ? "check" : "new entry";
            check[i] = is_check ? d.treatment[i] : "(new entries)";
        }
        if (std::find(group.begin(), group.end(), "new entry") == group.end()) {
            throw InputError("an augmented design needs new entries besides the checks; every entry of " +
                             role_name(d, "treatment") + " occurs in more than one block");
        }
        const int b = nuisance("block", d.block);
        const int g = add_factor(m, "checks vs new entries", group);
        const int c = add_factor(m, "checks", check);
        m.structure.push_back(g);
        m.structure.push_back(c);
        add_term(m, "block", {b});
        m.first_structure_term = 1;
        const int tg = add_term(m, "checks vs new entries", {g});
        const int tc = add_term(m, "checks", {c}, {tg});
        add_term(m, "new entries", {m.treatment_factor}, {tg, tc});
    } else if (design == "alpha") {
        require_column(d, d.rep, "rep");
        require_column(d, d.block, "block");
        require_levels(d, d.rep, "rep", 2, "replicates");
        require_levels(d, d.treatment, "treatment", 2, "entries");
        require_unique(d, {&d.rep, &d.treatment}, {"rep", "treatment"},
                       "an alpha design has each entry once in every replicate");
        const int r = nuisance("rep", d.rep);
        const int b = nuisance("block", d.block);
        add_term(m, "replicate", {r});
        add_term(m, "block (within replicate)", {r, b});
        m.first_structure_term = 2;
        add_term(m, "entry", {m.treatment_factor});
    } else {
        throw InputError("unknown design " + quoted(design) + "; expected one of crd, rcbd, latin, split, strip, "
                         "paired, augmented, alpha");
    }
    return m;
}

// Codes of one record, all factors.
std::vector<int> codes_of(const lm::ModelData& md, std::size_t i) {
    std::vector<int> c(md.factors.size());
    for (std::size_t f = 0; f < md.factors.size(); ++f) c[f] = md.factors[f].code[i];
    return c;
}

struct Means {
    std::vector<std::vector<double>> l;   // per treatment: the averaged model row
    std::vector<char> complete;           // every nuisance combination had the treatment's cells
};

// The least-squares mean's model row of every treatment (file comment).
Means treatment_rows(const Model& m, const lm::Fit& fit, const std::vector<std::size_t>& observed) {
    const auto& md = m.all;
    const int t = static_cast<int>(md.factors[m.treatment_factor].labels.size());
    std::set<std::vector<int>> combos;
    for (std::size_t i : observed) {
        std::vector<int> c;
        for (int f : m.nuisance) c.push_back(md.factors[f].code[i]);
        combos.insert(c);
    }
    std::vector<int> first(t, -1);
    for (std::size_t i = 0; i < md.factors[m.treatment_factor].code.size(); ++i) {
        int& f = first[md.factors[m.treatment_factor].code[i]];
        if (f < 0) f = static_cast<int>(i);
    }
    Means out;
    out.l.assign(t, std::vector<double>(fit.columns, 0.0));
    out.complete.assign(t, 1);
    std::vector<double> row;
    for (int j = 0; j < t; ++j) {
        std::vector<int> codes(md.factors.size(), -1);
        for (int f : m.structure) codes[f] = md.factors[f].code[first[j]];
        for (const auto& combo : combos) {
            for (std::size_t k = 0; k < m.nuisance.size(); ++k) codes[m.nuisance[k]] = combo[k];
            if (!lm::model_row(md, m.terms, fit, codes, row)) out.complete[j] = 0;
            for (int a = 0; a < fit.columns; ++a) out.l[j][a] += row[a];
        }
        for (double& v : out.l[j]) v /= static_cast<double>(combos.size());
    }
    return out;
}

// L G L' for the rows given (k × k, row-major), in units of σ².
std::vector<double> covariance(const lm::Fit& fit, const std::vector<std::vector<double>>& l) {
    const std::size_t k = l.size();
    const int p = fit.columns;
    std::vector<std::vector<double>> lg(k, std::vector<double>(p, 0.0));
    for (std::size_t i = 0; i < k; ++i) {
        for (int a = 0; a < p; ++a) {
            if (l[i][a] == 0) continue;
            const double* g = &fit.ginv[static_cast<std::size_t>(a) * p];
            for (int b = 0; b < p; ++b) lg[i][b] += l[i][a] * g[b];
        }
    }
    std::vector<double> v(k * k);
    for (std::size_t i = 0; i < k; ++i) {
        for (std::size_t j = i; j < k; ++j) {
            double s = 0;
            for (int b = 0; b < p; ++b) s += lg[i][b] * l[j][b];
            v[i * k + j] = v[j * k + i] = s;
        }
    }
    return v;
}

std::vector<double> var_differences(const std::vector<double>& cov, std::size_t k, double ms) {
    std::vector<double> vd(k * k, 0.0);
    for (std::size_t i = 0; i < k; ++i) {
        for (std::size_t j = 0; j < k; ++j) {
            vd[i * k + j] = ms * (cov[i * k + i] + cov[j * k + j] - 2 * cov[i * k + j]);
        }
    }
    return vd;
}

const AnalysisRow* find_row(const AnalysisResult& r, const std::string& source) {
    for (const auto& row : r.anova) {
        if (row.source == source) return &row;
    }
    return nullptr;
}

// Gomez & Gomez (1984) df adjustment of a relative efficiency when the error df are few (< 20):
// k = [(f1 + 1)(f2 + 3)] / [(f1 + 3)(f2 + 1)], f1 the design's error df, f2 the compared design's.
Efficiency efficiency(const std::string& versus, double re, int f1, int f2, const std::string& source) {
    Efficiency e;
    e.versus = versus;
    e.re = re;
    e.re_adjusted = re;
    e.source = source;
    if (f1 < 20) {
        const double k = (static_cast<double>(f1) + 1) * (f2 + 3) / ((static_cast<double>(f1) + 3) * (f2 + 1));
        e.df_factor = k;
        e.re_adjusted = re * k;
    }
    return e;
}

void paired_test(const TrialData& d, AnalysisResult& res) {
    std::vector<std::string> order;
    for (const auto& t : d.treatment) {
        if (std::find(order.begin(), order.end(), t) == order.end()) order.push_back(t);
    }
    std::map<std::string, std::pair<double, double>> pair;  // block → (first, second)
    std::vector<std::string> blocks;
    for (std::size_t i = 0; i < d.y.size(); ++i) {
        auto [it, fresh] = pair.emplace(d.block[i], std::pair{std::nan(""), std::nan("")});
        if (fresh) blocks.push_back(d.block[i]);
        (d.treatment[i] == order[0] ? it->second.first : it->second.second) = d.y[i];
    }
    std::vector<double> diff;
    for (const auto& b : blocks) {
        const auto& [a, c] = pair[b];
        if (std::isfinite(a) && std::isfinite(c)) diff.push_back(a - c);
    }
    if (diff.size() < 2) return;
    PairedTest pt;
    pt.first = order[0];
    pt.second = order[1];
    pt.pairs = static_cast<int>(diff.size());
    lm::CompensatedSum s;
    for (double v : diff) s.add(v);
    const double nd = static_cast<double>(diff.size());
    pt.mean_difference = s.value() / nd;
    lm::CompensatedSum ss;
    for (double v : diff) ss.add((v - pt.mean_difference) * (v - pt.mean_difference));
    // Student's paired t (Student 1908): t = d̄ / (s_d/√n) on n − 1 df.
    pt.df = pt.pairs - 1;
    pt.sd_difference = std::sqrt(ss.value() / pt.df);
    pt.se = pt.sd_difference / std::sqrt(nd);
    if (pt.se > 0) {
        pt.t = pt.mean_difference / pt.se;
        pt.p = 2 * t_upper_tail(std::fabs(pt.t), pt.df);
    } else {
        pt.p = pt.mean_difference == 0 ? 1.0 : 0.0;
    }
    const double tc = t_quantile(0.975, pt.df);
    pt.ci_lower = pt.mean_difference - tc * pt.se;
    pt.ci_upper = pt.mean_difference + tc * pt.se;
    if (pt.pairs < static_cast<int>(blocks.size())) {
        res.notes.push_back(std::to_string(blocks.size() - diff.size()) +
                            " pair(s) with a missing plot left out of the paired t-test");
    }
    res.paired = pt;
}

}  // namespace

Efficiency blocking_efficiency(double block_ms, int block_df, int treatment_df, double error_ms, int error_df) {
    const double re = (block_df * block_ms + (treatment_df + error_df) * error_ms) /
                      ((block_df + treatment_df + error_df) * error_ms);
    return efficiency("crd", re, error_df, error_df + block_df,
                      "Gomez & Gomez (1984) Statistical Procedures for Agricultural Research, 2nd ed., ch. 2 "
                      "(from memory)");
}

const std::vector<std::string>& analysis_designs() {
    static const std::vector<std::string> names(std::begin(kDesigns), std::end(kDesigns));
    return names;
}

AnalysisResult analyze_trial(const TrialData& d) {
    const auto& names = analysis_designs();
    if (std::find(names.begin(), names.end(), d.design) == names.end()) {
        throw InputError("unknown design " + quoted(d.design) +
                         "; expected one of crd, rcbd, latin, split, strip, paired, augmented, alpha");
    }
    const std::size_t n = d.y.size();
    if (!d.plot.empty() && d.plot.size() != n) {
        throw InputError("plot ids: " + std::to_string(d.plot.size()) + " for " + std::to_string(n) + " values");
    }
    for (std::size_t i = 0; i < n; ++i) {
        if (std::isinf(d.y[i])) {
            throw InputError(record_name(d, i) + ": the value is infinite; expected a finite number, or none for a "
                             "missing plot");
        }
    }
    Model m = build_model(d);

    // The observed plots.
    std::vector<std::size_t> observed;
    for (std::size_t i = 0; i < n; ++i) {
        if (!std::isnan(d.y[i])) observed.push_back(i);
    }
    const auto& tf = m.all.factors[m.treatment_factor];
    std::vector<int> n_obs(tf.labels.size(), 0);
    for (std::size_t i : observed) ++n_obs[tf.code[i]];
    for (std::size_t j = 0; j < tf.labels.size(); ++j) {
        if (n_obs[j] == 0) {
            throw InputError("treatment " + quoted(tf.labels[j]) + " (" + role_name(d, "treatment") +
                             ") has no observed plot; too many missing plots to estimate its mean");
        }
    }
    lm::ModelData md;
    md.factors = m.all.factors;
    for (auto& f : md.factors) {
        std::vector<int> c;
        c.reserve(observed.size());
        for (std::size_t i : observed) c.push_back(f.code[i]);
        f.code = std::move(c);
    }
    for (std::size_t i : observed) md.y.push_back(d.y[i]);
    const lm::Fit fit = lm::fit(md, m.terms);
    if (fit.residual_df <= 0) {
        throw InputError(std::to_string(observed.size()) + " observed plots leave no residual degrees of freedom for "
                         "the " + d.design + " model (" + std::to_string(n - observed.size()) +
                         " missing); too many missing plots to analyse");
    }

    AnalysisResult res;
    res.design = d.design;
    res.observed = static_cast<int>(observed.size());
    res.missing = static_cast<int>(n - observed.size());
    res.treatments = static_cast<int>(tf.labels.size());
    for (const auto& [role, f] : m.role_factor) {
        if (role == "block" || (d.design == "latin" && role == "row")) {
            res.blocks = static_cast<int>(m.all.factors[f].labels.size());
        }
    }
    if (d.design == "alpha") {
        std::set<std::pair<std::string, std::string>> cells;
        for (std::size_t i = 0; i < n; ++i) cells.insert({d.rep[i], d.block[i]});
        res.blocks = static_cast<int>(cells.size());
    }

    // ANOVA rows: model terms (error terms become error rows), the residual, the total.
    const double mse = fit.residual_ss / fit.residual_df;
    std::map<std::string, std::pair<double, int>> error_ms;  // source → (MS, df)
    error_ms[m.residual_name] = {mse, fit.residual_df};
    for (std::size_t t = 0; t < m.terms.size(); ++t) {
        const auto& tr = fit.terms[t];
        if (m.error_terms.count(m.sources[t]) && tr.df > 0) error_ms[m.sources[t]] = {tr.ss / tr.df, tr.df};
    }
    for (std::size_t t = 0; t < m.terms.size(); ++t) {
        const auto& tr = fit.terms[t];
        const std::string& src = m.sources[t];
        if (tr.df < tr.reference_df) {
            std::vector<std::string> before;
            for (std::size_t u = 0; u < t; ++u) {
                const auto& fu = m.terms[u].factors;
                const auto& ft = m.terms[t].factors;
                const bool marginal =
                    std::find(m.terms[t].marginal.begin(), m.terms[t].marginal.end(), static_cast<int>(u)) !=
                        m.terms[t].marginal.end() ||
                    (fu.size() < ft.size() &&
                     std::all_of(fu.begin(), fu.end(),
                                 [&](int f) { return std::find(ft.begin(), ft.end(), f) != ft.end(); }));
                if (!marginal) before.push_back(m.sources[u]);
            }
            AliasedTerm a;
            a.term = src;
            a.df = tr.df;
            a.df_expected = tr.reference_df;
            a.message = tr.df == 0
                            ? src + " is completely aliased (confounded) with " + join(before, ", ") +
                                  ": it has no degrees of freedom of its own and is left out of the table"
                            : src + " is partly aliased with " + join(before, ", ") + " or has empty cells: " +
                                  std::to_string(tr.df) + " df of " + std::to_string(tr.reference_df);
            res.aliased.push_back(a);
        }
        if (tr.df == 0) continue;
        AnalysisRow row;
        row.source = src;
        row.df = tr.df;
        row.ss = tr.ss;
        row.ms = tr.ss / tr.df;
        row.df_adjusted = tr.df_adjusted;
        row.ss_adjusted = tr.ss_adjusted;
        row.stratum = m.stratum_of.count(src) ? m.stratum_of[src] : "";
        row.is_error = m.error_terms.count(src) > 0;
        if (!row.is_error) {
            std::string err = m.residual_name;
            if (m.error_of.count(src)) err = m.error_of[src];
            if (d.design == "split" || d.design == "strip") {
                if (src == "block") err.clear();  // blocks form their own stratum: no F (R's Error() strata)
            }
            row.error = err;
            if (!err.empty() && error_ms.count(err)) {
                const auto [ems, edf] = error_ms[err];
                if (ems > 0 && edf > 0) {
                    row.f = row.ms / ems;
                    row.p = f_upper_tail(*row.f, row.df, edf);
                    if (row.df_adjusted > 0) {
                        row.f_adjusted = (row.ss_adjusted / row.df_adjusted) / ems;
                        row.p_adjusted = f_upper_tail(*row.f_adjusted, row.df_adjusted, edf);
                    }
                }
            }
        }
        res.anova.push_back(row);
    }
    AnalysisRow resid;
    resid.source = m.residual_name;
    resid.df = fit.residual_df;
    resid.ss = fit.residual_ss;
    resid.ms = mse;
    resid.stratum = m.residual_stratum;
    resid.is_error = true;
    resid.df_adjusted = resid.df;
    resid.ss_adjusted = resid.ss;
    res.anova.push_back(resid);
    AnalysisRow total;
    total.source = "total";
    total.df = fit.total_df;
    total.ss = fit.total_ss;
    total.df_adjusted = total.df;
    total.ss_adjusted = total.ss;
    res.anova.push_back(total);

    // Fitted values of every record (predictions for the missing plots); grand mean over all records.
    res.plots.resize(n);
    std::vector<double> row;
    lm::CompensatedSum all_fitted;
    std::size_t next_obs = 0;
    for (std::size_t i = 0; i < n; ++i) {
        PlotFit& pf = res.plots[i];
        pf.plot = i < d.plot.size() && !d.plot[i].empty() ? d.plot[i] : std::to_string(i + 1);
        pf.treatment = d.treatment[i];
        for (const auto& [role, f] : m.role_factor) pf.labels[role] = m.all.factors[f].labels[m.all.factors[f].code[i]];
        for (std::size_t k = 0; k < d.factor_names.size(); ++k) pf.labels[d.factor_names[k]] = d.factor_levels[k][i];
        if (next_obs < observed.size() && observed[next_obs] == i) {
            pf.y = d.y[i] + d.y_offset;
            pf.fitted = fit.fitted[next_obs] + d.y_offset;
            pf.residual = fit.residuals[next_obs];
            // Internally studentized residual (analysis.hpp: Kutner et al. 2005, §10.2, eq. 10.15).
            const double h = fit.leverage[next_obs];
            pf.leverage = h;
            if (h < 1 && mse > 0) pf.standardized = *pf.residual / std::sqrt(mse * (1 - h));
            all_fitted.add(d.y[i]);
            ++next_obs;
        } else {
            lm::model_row(m.all, m.terms, fit, codes_of(m.all, i), row);
            const double pred = lm::estimate(fit, row);
            pf.fitted = pred + d.y_offset;
            all_fitted.add(pred);
        }
    }
    res.grand_mean = all_fitted.value() / static_cast<double>(n) + d.y_offset;
    for (const auto& r : res.anova) {
        if (r.is_error) res.cv.push_back({r.source, 100 * std::sqrt(r.ms) / res.grand_mean});
    }
    res.cv_percent = 100 * std::sqrt(mse) / res.grand_mean;
    for (std::size_t i = 0; i < n; ++i) {
        if (!res.plots[i].y) {
            res.notes.push_back(record_name(d, i) + " (treatment " + quoted(d.treatment[i]) +
                                ") is missing; the model predicts " + std::to_string(res.plots[i].fitted));
        }
    }

    // Least-squares means of the treatments, and of each factor and interaction of a factorial.
    const Means lsm = treatment_rows(m, fit, observed);
    const bool check_estimable = fit.columns <= 1500;
    const std::vector<double> h = check_estimable ? lm::estimability_matrix(md, m.terms, fit) : std::vector<double>{};
    const std::size_t t = tf.labels.size();
    const std::vector<double> cov = covariance(fit, lsm.l);
    const bool strata = d.design == "split" || d.design == "strip";

    MeansTable trt;
    trt.term = "treatment";
    trt.factors = {"treatment"};
    trt.error = m.residual_name;
    trt.error_ms = mse;
    trt.error_df = fit.residual_df;
    std::vector<std::string> inestimable;
    for (std::size_t j = 0; j < t; ++j) {
        MeanRow r;
        r.label = tf.labels[j];
        r.levels = {tf.labels[j]};
        r.n = n_obs[j];
        if (lsm.complete[j] && lm::estimable(h, lsm.l[j])) {
            r.mean = lm::estimate(fit, lsm.l[j]) + d.y_offset;
            r.se = std::sqrt(mse * std::max(cov[j * t + j], 0.0));
        } else {
            inestimable.push_back(quoted(tf.labels[j]));
        }
        trt.rows.push_back(r);
    }
    if (!inestimable.empty()) {
        res.notes.push_back("no least-squares mean for treatment(s) " + join(inestimable, ", ") +
                            ": not estimable from the observed plots (aliased with blocks, or cells missing); "
                            "the tables of single factors may still be");
    }
    if (!strata) compare::compare_means(trt, var_differences(cov, t, mse));
    res.means.push_back(trt);

    // Factor margins and interactions (factorials, split, strip): equal-weight averages of treatment means.
    if (!m.crossing.empty()) {
        const int k = static_cast<int>(m.crossing.size());
        std::vector<int> trt_first(t, -1);
        for (std::size_t i = 0; i < n; ++i) {
            int& f = trt_first[tf.code[i]];
            if (f < 0) f = static_cast<int>(i);
        }
        for (const auto& subset : interaction_subsets(k)) {
            MeansTable tab;
            std::vector<std::string> fnames;
            for (int s : subset) fnames.push_back(m.all.factors[m.crossing[s]].name);
            tab.term = join(fnames, ":");
            tab.factors = fnames;
            tab.error = m.residual_name;
            tab.error_ms = mse;
            tab.error_df = fit.residual_df;
            std::map<std::vector<int>, std::vector<std::size_t>> groups;  // level codes → treatments
            for (std::size_t j = 0; j < t; ++j) {
                std::vector<int> key;
                for (int s : subset) key.push_back(m.all.factors[m.crossing[s]].code[trt_first[j]]);
                if (key[0] < 0) continue;  // the extra control is outside the crossing
                groups[key].push_back(j);
            }
            std::vector<std::vector<double>> l;
            bool all_ok = true;
            for (const auto& [key, members] : groups) {
                MeanRow r;
                for (std::size_t q = 0; q < key.size(); ++q) {
                    r.levels.push_back(m.all.factors[m.crossing[subset[q]]].labels[key[q]]);
                }
                r.label = join(r.levels, kFactorLabelSeparator);
                std::vector<double> lv(fit.columns, 0.0);
                bool ok = true;
                for (std::size_t j : members) {
                    r.n += n_obs[j];
                    ok = ok && lsm.complete[j];
                    for (int a = 0; a < fit.columns; ++a) lv[a] += lsm.l[j][a] / static_cast<double>(members.size());
                }
                ok = ok && lm::estimable(h, lv);
                if (ok) {
                    r.mean = lm::estimate(fit, lv) + d.y_offset;
                    r.se = std::sqrt(mse * std::max(lm::quadratic_form(fit, lv, lv), 0.0));
                }
                all_ok = all_ok && ok;
                l.push_back(lv);
                tab.rows.push_back(r);
            }
            if (!strata && all_ok) {
                const auto c = covariance(fit, l);
                compare::compare_means(tab, var_differences(c, l.size(), mse));
            }
            res.means.push_back(tab);
        }
    }

    // Split and strip plots: standard errors from the strata (Gomez & Gomez 1984, ch. 3, from memory).
    if (strata) {
        const bool split = d.design == "split";
        const std::string an = d.factor_names[0], sn = d.factor_names[1];
        const double r = res.blocks;
        const double a = static_cast<double>(m.all.factors[m.crossing[0]].labels.size());
        const double b = static_cast<double>(m.all.factors[m.crossing[1]].labels.size());
        const std::string ea_name = split ? "residual (whole plot)" : "residual (main strips)";
        const std::string eb_name = split ? m.residual_name : "residual (sub strips)";
        const auto ea = error_ms.count(ea_name) ? error_ms[ea_name] : std::pair<double, int>{0, 0};
        const auto eb = error_ms.count(eb_name) ? error_ms[eb_name] : std::pair<double, int>{0, 0};
        const auto ec = error_ms[m.residual_name];
        if (ea.second > 0 && eb.second > 0) {
            auto plain = [&](const std::string& what, double var, std::pair<double, int> e) {
                SedRow s;
                s.comparison = what;
                s.sed = std::sqrt(var);
                s.df = e.second;
                s.t_critical = t_quantile(0.975, e.second);
                s.lsd_5pct = s.t_critical * s.sed;
                res.standard_errors.push_back(s);
            };
            // Weighted t' = (w1·t1 + w2·t2)/(w1 + w2) for a SED mixing two error MS (Gomez & Gomez ch. 3).
            auto mixed = [&](const std::string& what, double var, double w1, std::pair<double, int> e1, double w2,
                             std::pair<double, int> e2) {
                SedRow s;
                s.comparison = what;
                s.sed = std::sqrt(var);
                s.t_critical = (w1 * t_quantile(0.975, e1.second) + w2 * t_quantile(0.975, e2.second)) / (w1 + w2);
                s.lsd_5pct = s.t_critical * s.sed;
                res.standard_errors.push_back(s);
            };
            plain("two " + an + " means", 2 * ea.first / (r * b), ea);
            plain("two " + sn + " means", 2 * eb.first / (r * a), eb);
            if (split) {
                plain("two " + sn + " means at the same " + an, 2 * eb.first / r, eb);
                mixed("two " + an + " means at the same or different " + sn,
                      2 * ((b - 1) * eb.first + ea.first) / (r * b), (b - 1) * eb.first, eb, ea.first, ea);
            } else if (ec.second > 0) {
                mixed("two " + an + " means at the same " + sn, 2 * ((b - 1) * ec.first + ea.first) / (r * b),
                      (b - 1) * ec.first, ec, ea.first, ea);
                mixed("two " + sn + " means at the same " + an, 2 * ((a - 1) * ec.first + eb.first) / (r * a),
                      (a - 1) * ec.first, ec, eb.first, eb);
            }
            // Margins: constant SED with their own stratum's error (complete data: r blocks).
            for (auto& tab : res.means) {
                std::pair<double, int> e;
                double reps = 0;
                std::string ename;
                if (tab.term == an) {
                    e = ea, reps = r * b, ename = ea_name;
                } else if (tab.term == sn) {
                    e = eb, reps = r * a, ename = eb_name;
                } else {
                    // Cells (and the treatment table): Var(cell mean) from the strata's components.
                    const double var = split ? ((b - 1) * eb.first + ea.first) / (r * b)
                                             : (a * ea.first + b * eb.first + (a * b - a - b) * ec.first) / (r * a * b);
                    for (auto& row : tab.rows) {
                        if (row.mean) row.se = std::sqrt(std::max(var, 0.0));
                    }
                    tab.error.clear();
                    tab.error_ms = 0;
                    tab.error_df = 0;
                    continue;
                }
                tab.error = ename;
                tab.error_ms = e.first;
                tab.error_df = e.second;
                for (auto& row : tab.rows) {
                    if (row.mean) row.se = std::sqrt(e.first / reps);
                }
                const std::size_t k = tab.rows.size();
                std::vector<double> vd(k * k, 2 * e.first / reps);
                for (std::size_t i = 0; i < k; ++i) vd[i * k + i] = 0;
                compare::compare_means(tab, vd);
            }
        }
        res.notes.push_back("standard errors of the " + d.design + "-plot means assume complete data (" +
                            std::to_string(res.blocks) + " blocks)");
    }

    // The SED of two treatment means, and Fisher's LSD.
    if (d.design == "rcbd" || d.design == "paired") {
        res.sed = std::sqrt(2 * mse / res.blocks);  // two treatments without a missing plot (G&G ch. 5, 7)
    } else if (d.design == "latin") {
        res.sed = std::sqrt(2 * mse / static_cast<double>(t));
    } else if (!strata) {
        res.sed = res.means[0].sed;
    }
    if (res.sed) res.lsd_5pct = t_quantile(0.975, fit.residual_df) * *res.sed;

    // Relative efficiency.
    const std::string gomez = "Gomez & Gomez (1984) Statistical Procedures for Agricultural Research, 2nd ed., "
                              "ch. 2 (from memory)";
    const int fe = fit.residual_df;
    if (d.design == "rcbd" || d.design == "paired") {
        // RE = [df_b·Eb + (df_t + df_e)·Ee] / [(df_b + df_t + df_e)·Ee]; with complete data
        // [(r−1)Eb + r(t−1)Ee] / [(rt−1)Ee]. CRD error df = f_e + df_b.
        const AnalysisRow* blk = find_row(res, "block");
        if (blk && mse > 0) {
            int dft = 0;
            for (const auto& r : res.anova) {
                if (!r.is_error && r.source != "total" && r.source != "block") dft += r.df;
            }
            res.efficiency.push_back(blocking_efficiency(blk->ms, blk->df, dft, mse, fe));
        }
    } else if (d.design == "latin") {
        const AnalysisRow* rr = find_row(res, "row");
        const AnalysisRow* cc = find_row(res, "column");
        if (rr && cc && mse > 0) {
            const double tt = static_cast<double>(t);
            // Gomez & Gomez (1984) ch. 2 (Latin square), from memory: Er, Ec the row and column MS.
            res.efficiency.push_back(efficiency("crd", (rr->ms + cc->ms + (tt - 1) * mse) / ((tt + 1) * mse), fe,
                                                fe + rr->df + cc->df, gomez));
            res.efficiency.push_back(efficiency("rcbd (rows as blocks)", (cc->ms + (tt - 1) * mse) / (tt * mse), fe,
                                                fe + cc->df, gomez));
            res.efficiency.push_back(efficiency("rcbd (columns as blocks)", (rr->ms + (tt - 1) * mse) / (tt * mse),
                                                fe, fe + rr->df, gomez));
        }
    } else if (d.design == "alpha") {
        // Against an RCBD of the same replicates: its error pools the blocks (adjusted for entries) with
        // the residual; RE = (2·MSE_rcbd/r) / mean Var(difference) (common practice: the ratio of the
        // average variances of a difference of two entries).
        const AnalysisRow* blk = find_row(res, "block (within replicate)");
        const auto& tab = res.means[0];
        if (blk && tab.sed && *tab.sed > 0) {
            std::set<std::string> reps(d.rep.begin(), d.rep.end());
            const double mse_rcbd = (blk->ss_adjusted + fit.residual_ss) / (blk->df_adjusted + fe);
            const double re = (2 * mse_rcbd / static_cast<double>(reps.size())) / (*tab.sed * *tab.sed);
            Efficiency e;
            e.versus = "rcbd";
            e.re = e.re_adjusted = re;
            e.source = "common practice: ratio of the average variances of a difference of two entries";
            res.efficiency.push_back(e);
        }
    }
    if (d.design == "paired") paired_test(d, res);
    if (d.design == "latin") {
        std::set<std::string> rows(d.row.begin(), d.row.end()), cols(d.col.begin(), d.col.end());
        if (rows.size() != t || cols.size() != t) {
            res.notes.push_back("not a Latin square: " + std::to_string(rows.size()) + " rows, " +
                                std::to_string(cols.size()) + " columns and " + std::to_string(t) +
                                " treatments; analysed as a row-and-column design");
        }
    }
    return res;
}

}  // namespace pw
