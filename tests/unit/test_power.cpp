// Trial planning (core/stats/power.hpp): error df, pairwise and F-test power, replicates needed, the
// residual-df warning, against R 4.2.2 and the EPPO rule.
//
// Reference files in tests/data/power (origins in its README.md):
//   power_r422.json          written by power_reference.R with R 4.2.2 Patched (2022-11-10 r83330): pt/pf with
//                            ncp for the exact df of each design, power.t.test(strict = TRUE) for the
//                            two-sample case, power.anova.test for the F test of a CRD, and R's own search for
//                            the smallest number of replicates;
//   distributions_power.json copied from the project's shared reference set (R 4.2.2's power.t.test,
//                            power.anova.test and noncentral pf, with the values of R's help examples).
// Tolerances: t and F quantiles 1e-10 relative; t-test powers 1e-8 relative (seen: 3e-12); F-test powers
// 2e-9 absolute (seen: 9e-10), since R's noncentral F goes through its noncentral beta, which stops at an
// absolute error of 1e-9 (errmax in R's nmath/pnbeta.c, from memory); R's own pt and pf give the same
// two-treatment power to 1.6e-9 relative (power_r422.json).
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <sstream>
#include <stdexcept>
#include <string>

#include <nlohmann/json.hpp>

#include "core/error.hpp"
#include "core/stats/anova.hpp"
#include "core/stats/power.hpp"

namespace {

using nlohmann::json;

constexpr double kQuantileTol = 1e-10;
constexpr double kPowerTol = 1e-8;
constexpr double kFPowerAbsTol = 2e-9;

json read_json(const std::string& name) {
    std::ifstream in(std::string(PW_TEST_DATA_DIR) + "/power/" + name, std::ios::binary);
    REQUIRE(in.good());
    std::ostringstream ss;
    ss << in.rdbuf();
    return json::parse(ss.str());
}

void require_rel(double got, double want, double tol) {
    CAPTURE(got, want, tol);
    REQUIRE(std::abs(got - want) <= tol * std::abs(want));
}

void require_abs(double got, double want, double tol) {
    CAPTURE(got, want, tol);
    REQUIRE(std::abs(got - want) <= tol);
}

pw::PlanQuestion question(const json& e) {
    pw::PlanQuestion q;
    q.design = e.at("design").get<std::string>() == "crd" ? pw::PlanDesign::Crd : pw::PlanDesign::Rcbd;
    q.treatments = e.at("treatments").get<int>();
    q.cv_percent = e.at("cv").get<double>();
    q.difference_percent = e.at("difference").get<double>();
    q.alpha = e.at("alpha").get<double>();
    if (e.contains("power")) q.power = e.at("power").get<double>();
    return q;
}

}  // namespace

TEST_CASE("Error df, SED, t and F power of CRD and RCBD match R's pt and pf with ncp", "[stats][power]") {
    // Source: R 4.2.2 (power_r422.json): qt, qf, pt(..., ncp) and pf(..., ncp) at each design's own error df,
    // CRD t(r-1) and RCBD (t-1)(r-1) (Gomez & Gomez 1984, ch. 2, from memory).
    const json ref = read_json("power_r422.json");
    REQUIRE(ref.at("power_at_replicates").size() >= 10);
    for (const json& e : ref.at("power_at_replicates")) {
        const pw::PlanQuestion q = question(e);
        const int r = e.at("replicates").get<int>();
        CAPTURE(e.dump());
        const pw::PlanPower p = pw::plan_power(q, r);
        REQUIRE(p.error_df == e.at("error_df").get<int>());
        REQUIRE(p.f_df1 == e.at("f_df1").get<int>());
        REQUIRE(p.f_df2 == e.at("f_df2").get<int>());
        require_rel(p.sed_percent, e.at("sed").get<double>(), 1e-14);
        require_rel(p.t_ncp, e.at("t_ncp").get<double>(), 1e-14);
        require_rel(p.f_ncp, e.at("f_ncp").get<double>(), 1e-14);
        require_rel(p.t_critical, e.at("t_critical").get<double>(), kQuantileTol);
        require_rel(p.lsd_percent, e.at("lsd").get<double>(), kQuantileTol);
        require_rel(p.f_critical, e.at("f_critical").get<double>(), kQuantileTol);
        require_rel(p.t_power, e.at("t_power").get<double>(), kPowerTol);
        require_abs(p.f_power, e.at("f_power").get<double>(), kFPowerAbsTol);
    }
}

TEST_CASE("The two-treatment CRD is R's two-sample power.t.test and its F test R's power.anova.test",
          "[stats][power]") {
    // Source: R 4.2.2 power.t.test(n = r, delta = d, sd = cv, sig.level = a, strict = TRUE) (df 2(n - 1), the
    // CRD with t = 2) and power.anova.test(groups = t, n = r, between.var = d^2/(2(t - 1)), within.var = cv^2)
    // (power_r422.json); these are R's own routines, independent of the pt/pf formula above.
    const json ref = read_json("power_r422.json");
    int two_sample = 0, anova = 0;
    for (const json& e : ref.at("power_at_replicates")) {
        CAPTURE(e.dump());
        const pw::PlanPower p = pw::plan_power(question(e), e.at("replicates").get<int>());
        if (e.contains("power_t_test_strict")) {
            require_rel(p.t_power, e.at("power_t_test_strict").get<double>(), kPowerTol);
            ++two_sample;
        }
        if (e.contains("power_anova_test")) {
            require_abs(p.f_power, e.at("power_anova_test").get<double>(), kFPowerAbsTol);
            ++anova;
        }
    }
    REQUIRE(two_sample >= 5);
    REQUIRE(anova >= 8);
}

TEST_CASE("The replicates needed are R's smallest r, and power.t.test's n rounded up", "[stats][power]") {
    // Source: R 4.2.2 (power_r422.json): the first r = 2, 3, ... whose pt-based power reaches the target, and
    // for two treatments in a CRD ceiling(power.t.test(delta, sd, power, strict = TRUE)$n), found by R's uniroot.
    const json ref = read_json("power_r422.json");
    for (const json& e : ref.at("replicates_needed")) {
        CAPTURE(e.dump());
        const pw::ReplicatePlan plan = pw::plan_replicates(question(e));
        REQUIRE(plan.reached);
        REQUIRE(plan.at.replicates == e.at("replicates").get<int>());
        require_rel(plan.at.t_power, e.at("power_at_replicates").get<double>(), kPowerTol);
        require_abs(plan.at.f_power, e.at("f_power_at_replicates").get<double>(), kFPowerAbsTol);
        if (e.contains("power_t_test_n_strict"))
            REQUIRE(plan.at.replicates == static_cast<int>(std::ceil(e.at("power_t_test_n_strict").get<double>())));
    }
}

TEST_CASE("R's help examples of power.t.test and power.anova.test are reproduced", "[stats][power]") {
    // Source: distributions_power.json (shared reference set), R 4.2.2; values also remembered from R's help
    // pages (from memory): power.t.test(n = 20, delta = 1, sd = 1) = 0.8689528 (one tail, strict = FALSE),
    // power.anova.test(groups = 4, n = 5, between.var = 1, within.var = 3) = 0.3535594.
    const json ref = read_json("distributions_power.json");
    int examples = 0;
    for (const json& e : ref.at("power")) {
        const std::string call = e.value("r_call", "");
        CAPTURE(call);
        if (call == "power.t.test(n = 20, delta = 1, sd = 1)") {
            ++examples;
            // Two-sample, df 38, ncp sqrt(n/2)*delta/sd; R's default counts the upper tail only.
            const double tc = pw::t_quantile(0.975, 38);
            require_rel(pw::noncentral_t_upper_tail(tc, 38, std::sqrt(10.0)), e.at("power").get<double>(), kPowerTol);
            // The same as a plan: CRD, 2 treatments, 20 replicates, CV 10 %, difference 10 %.
            pw::PlanQuestion q{pw::PlanDesign::Crd, 2, 10.0, 10.0, 0.05, 0.8};
            const pw::PlanPower p = pw::plan_power(q, 20);
            require_rel(p.t_power - pw::noncentral_t_lower_tail(-tc, 38, std::sqrt(10.0)), e.at("power").get<double>(),
                        kPowerTol);
        } else if (call == "power.anova.test(groups = 4, n = 5, between.var = 1, within.var = 3)") {
            ++examples;
            // lambda = (groups - 1) n between.var / within.var = 5, df (3, 16).
            require_abs(pw::noncentral_f_upper_tail(pw::f_quantile(0.95, 3, 16), 3, 16, 5.0), e.at("power").get<double>(),
                        kFPowerAbsTol);
            // As a plan: between.var = d^2/(2(t - 1)) = 1 gives d = sqrt(6); within.var = cv^2 = 3.
            pw::PlanQuestion q{pw::PlanDesign::Crd, 4, std::sqrt(3.0), std::sqrt(6.0), 0.05, 0.8};
            require_abs(pw::plan_power(q, 5).f_power, e.at("power").get<double>(), kFPowerAbsTol);
        } else if (call == "power.anova.test(groups = 4, between.var = 1, within.var = 3, power = 0.80)") {
            ++examples;
            // R's n = 11.93: 12 replicates are the fewest whose F power reaches 0.8.
            pw::PlanQuestion q{pw::PlanDesign::Crd, 4, std::sqrt(3.0), std::sqrt(6.0), 0.05, 0.8};
            const int n = static_cast<int>(std::ceil(e.at("n_per_group").get<double>()));
            REQUIRE(n == 12);
            REQUIRE(pw::plan_power(q, n).f_power >= 0.8);
            REQUIRE(pw::plan_power(q, n - 1).f_power < 0.8);
        } else if (call == "power.t.test(n = NULL, delta = 1, sd = 1, power = 0.8)") {
            ++examples;
            // R's n = 16.71 per group: a two-treatment CRD needs 17 replicates.
            pw::PlanQuestion q{pw::PlanDesign::Crd, 2, 10.0, 10.0, 0.05, 0.8};
            REQUIRE(pw::plan_replicates(q).at.replicates ==
                    static_cast<int>(std::ceil(e.at("n_per_group").get<double>())));
        }
    }
    REQUIRE(examples == 4);
    int checked = 0;
    for (const json& e : ref.at("noncentral_F_power")) {
        // Source: R 4.2.2 pf(qf(1 - alpha, df1, df2), df1, df2, ncp, lower.tail = FALSE); scipy's ncf.sf agrees
        // to 5e-10 (both in the reference file).
        CAPTURE(e.dump());
        const double df1 = e.at("df1").get<double>(), df2 = e.at("df2").get<double>();
        const double ncp = e.contains("ncp") ? e.at("ncp").get<double>() : e.at("ncp_lambda").get<double>();
        const double fc = pw::f_quantile(0.95, df1, df2);
        if (e.contains("f_crit")) require_rel(fc, e.at("f_crit").get<double>(), kQuantileTol);
        require_abs(pw::noncentral_f_upper_tail(fc, df1, df2, ncp), e.at("power").get<double>(), kFPowerAbsTol);
        ++checked;
    }
    REQUIRE(checked == 5);
}

TEST_CASE("Residual df below 12 is flagged with EPPO's rule named", "[stats][power]") {
    // Source: EPPO PP 1/152(4) (2012) recommends at least 12 residual df; by it an RCBD with 4 treatments
    // needs 5 replicates, with 5 treatments 4, with 7 treatments 3 (the project's domain brief, section 3).
    REQUIRE(pw::replicates_for_error_df(pw::PlanDesign::Rcbd, 4, 12) == 5);
    REQUIRE(pw::replicates_for_error_df(pw::PlanDesign::Rcbd, 5, 12) == 4);
    REQUIRE(pw::replicates_for_error_df(pw::PlanDesign::Rcbd, 7, 12) == 3);
    // CRD error df t(r - 1) (Gomez & Gomez 1984, ch. 2, from memory): 4 treatments x 4 replicates = 12.
    REQUIRE(pw::replicates_for_error_df(pw::PlanDesign::Crd, 4, 12) == 4);

    const auto warning = pw::residual_df_warning(pw::PlanDesign::Rcbd, 4, 4);  // (4-1)(4-1) = 9 df
    REQUIRE(warning.has_value());
    CHECK_THAT(*warning, Catch::Contains("9 residual degrees of freedom") && Catch::Contains("EPPO") &&
                             Catch::Contains("PP 1/152(4)") && Catch::Contains("12") &&
                             Catch::Contains("5 replicates would give 12"));
    REQUIRE_FALSE(pw::residual_df_warning(pw::PlanDesign::Rcbd, 4, 5).has_value());
    REQUIRE(pw::residual_df_warning(pw::PlanDesign::Crd, 4, 3).has_value());      // 4 x 2 = 8 df
    REQUIRE_FALSE(pw::residual_df_warning(pw::PlanDesign::Crd, 4, 4).has_value());
}

TEST_CASE("The replicates needed lie near the rule of thumb r = 16 (CV/d)^2", "[stats][power]") {
    // Sanity only, not validation: the rule of thumb is from memory (project domain brief, section 3; it is
    // the normal approximation 2 (z_0.975 + z_0.8)^2 = 15.7 rounded), and it underestimates at few df.
    struct Row { int t; double cv, d; };
    for (const Row& row : {Row{4, 10, 15}, Row{4, 10, 5}, Row{6, 12, 10}, Row{3, 20, 8}}) {
        pw::PlanQuestion q{pw::PlanDesign::Rcbd, row.t, row.cv, row.d, 0.05, 0.8};
        const double rule = 16.0 * (row.cv / row.d) * (row.cv / row.d);
        const int r = pw::plan_replicates(q).at.replicates;
        CAPTURE(row.t, row.cv, row.d, rule, r);
        REQUIRE(r >= rule * 0.9);
        REQUIRE(r <= rule * 1.3 + 1);
    }
}

TEST_CASE("A planning question outside its range is refused naming the option", "[stats][power]") {
    const pw::PlanQuestion ok{pw::PlanDesign::Rcbd, 4, 10, 15, 0.05, 0.8};
    auto refused = [](pw::PlanQuestion q, const std::string& option) {
        CAPTURE(option);
        REQUIRE_THROWS_AS(pw::plan_replicates(q), pw::InputError);
        REQUIRE_THROWS_WITH(pw::plan_replicates(q), Catch::Contains(option));
    };
    pw::PlanQuestion q = ok;
    q.treatments = 1;
    refused(q, "--treatments");
    q = ok;
    q.cv_percent = 0;
    refused(q, "--cv");
    q = ok;
    q.difference_percent = -5;
    refused(q, "--difference");
    q = ok;
    q.alpha = 1.5;
    refused(q, "--alpha");
    q = ok;
    q.power = 0.04;
    refused(q, "--power");
    REQUIRE_THROWS_AS(pw::plan_power(ok, 1), pw::InputError);
    REQUIRE_THROWS_WITH(pw::plan_power(ok, 1), Catch::Contains("--replicates"));
    // A difference too small to reach the power within the cap is reported, not looped on forever.
    pw::PlanQuestion tiny{pw::PlanDesign::Rcbd, 3, 30, 0.5, 0.05, 0.8};
    const pw::ReplicatePlan plan = pw::plan_replicates(tiny);
    REQUIRE_FALSE(plan.reached);
    REQUIRE(plan.at.replicates == pw::kMaxPlanReplicates);
    REQUIRE(plan.at.t_power < 0.8);
}
