// F upper-tail probabilities and Student's t quantiles (core/stats/anova.hpp) against R 4.2.2 and
// printed statistical tables.
//
// Reference files in tests/data/stats (origins in its README.md): distributions_r422.json (R's qf and qt
// critical values with printed-table values from memory) and distributions_extra.json (R's pf upper
// tails and qt at other points). Tolerances: p-values 1e-8 relative, quantiles 1e-9 relative (the
// shared reference set's suggestion for quantiles of F and t).
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <limits>
#include <sstream>
#include <stdexcept>
#include <string>

#include <nlohmann/json.hpp>

#include "core/stats/anova.hpp"

namespace {

using nlohmann::json;

constexpr double kPTol = 1e-8;
constexpr double kQuantileTol = 1e-9;

json read_json(const std::string& name) {
    std::ifstream in(std::string(PW_TEST_DATA_DIR) + "/stats/" + name, std::ios::binary);
    REQUIRE(in.good());
    std::ostringstream ss;
    ss << in.rdbuf();
    return json::parse(ss.str());
}

void require_rel(double got, double want, double tol) {
    CAPTURE(got, want, tol);
    if (want == 0) {
        REQUIRE(std::abs(got) <= tol);
    } else {
        REQUIRE(std::abs(got - want) <= tol * std::abs(want));
    }
}

}  // namespace

TEST_CASE("The F upper tail at R's 5% and 1% critical values is 5% and 1%", "[stats][distributions]") {
    // Source: R 4.2.2 qf(0.95, df1, df2) and qf(0.99, df1, df2), 15 significant digits
    // (distributions_r422.json). Rounding q to 15 digits moves the tail by far less than 1e-8 relative.
    const json ref = read_json("distributions_r422.json");
    for (const auto& [key, level] : {std::pair{"F_critical_5pct", 0.05}, std::pair{"F_critical_1pct", 0.01}}) {
        for (const json& e : ref.at(key)) {
            const double q = e.at("r_qf").get<double>();
            const int df1 = e.at("df1").get<int>();
            const int df2 = e.at("df2").get<int>();
            CAPTURE(key, df1, df2, q);
            require_rel(pw::f_upper_tail(q, df1, df2), level, kPTol);
        }
    }
}

TEST_CASE("The F upper tail matches R's pf with lower.tail = FALSE, small tails included", "[stats][distributions]") {
    // Source: R 4.2.2 pf(f, df1, df2, lower.tail = FALSE) (distributions_extra.json), p from 0.86 down to 7e-11.
    const json ref = read_json("distributions_extra.json");
    for (const json& e : ref.at("f_upper_tail")) {
        const double f = e.at("f").get<double>();
        const double df1 = e.at("df1").get<double>();
        const double df2 = e.at("df2").get<double>();
        CAPTURE(f, df1, df2);
        require_rel(pw::f_upper_tail(f, df1, df2), e.at("p").get<double>(), kPTol);
    }
}

TEST_CASE("Student's t quantiles match R's qt", "[stats][distributions]") {
    // Source: R 4.2.2 qt(0.975, df) for df 1..30 (distributions_r422.json) and qt(p, df) at other
    // probabilities, fractional df included (distributions_extra.json).
    const json tables = read_json("distributions_r422.json");
    const json extra = read_json("distributions_extra.json");
    for (const json& e : tables.at("t_critical_two_sided_5pct")) {
        const int df = e.at("df").get<int>();
        CAPTURE(df);
        require_rel(pw::t_quantile(0.975, df), e.at("r_qt_0975").get<double>(), kQuantileTol);
    }
    for (const json& e : extra.at("t_quantile")) {
        const double p = e.at("p").get<double>();
        const double df = e.at("df").get<double>();
        CAPTURE(p, df);
        require_rel(pw::t_quantile(p, df), e.at("q").get<double>(), kQuantileTol);
    }
}

TEST_CASE("Critical values agree with printed statistical tables at the printed decimals", "[stats][distributions]") {
    // From memory of printed tables (the usual appendix tables of t and F):
    //   t(0.975, 10) = 2.228, t(0.975, 20) = 2.086; F(0.95; 3, 12) = 3.49, F(0.99; 2, 10) = 7.56.
    CHECK(std::abs(pw::t_quantile(0.975, 10) - 2.228) < 0.0005);
    CHECK(std::abs(pw::t_quantile(0.975, 20) - 2.086) < 0.0005);
    // A printed F critical value v to 2 decimals means the true value lies in [v − 0.005, v + 0.005],
    // so the upper tail crosses the level inside that interval.
    CHECK(pw::f_upper_tail(3.485, 3, 12) > 0.05);
    CHECK(pw::f_upper_tail(3.495, 3, 12) < 0.05);
    CHECK(pw::f_upper_tail(7.555, 2, 10) > 0.01);
    CHECK(pw::f_upper_tail(7.565, 2, 10) < 0.01);

    // The printed-table values carried in distributions_r422.json (from memory, there marked so).
    const json ref = read_json("distributions_r422.json");
    for (const auto& [key, level] : {std::pair{"F_critical_5pct", 0.05}, std::pair{"F_critical_1pct", 0.01}}) {
        for (const json& e : ref.at(key)) {
            const double v = e.at("printed_table_from_memory").get<double>();
            const int df1 = e.at("df1").get<int>();
            const int df2 = e.at("df2").get<int>();
            CAPTURE(key, df1, df2, v);
            CHECK(pw::f_upper_tail(v - 0.005, df1, df2) > level);
            CHECK(pw::f_upper_tail(v + 0.005, df1, df2) < level);
        }
    }
    for (const json& e : ref.at("t_critical_two_sided_5pct")) {
        const int df = e.at("df").get<int>();
        CAPTURE(df);
        CHECK(std::abs(pw::t_quantile(0.975, df) - e.at("printed_table_from_memory").get<double>()) < 0.0005);
    }
}

TEST_CASE("Arguments outside the distributions are refused", "[stats][distributions][errors]") {
    // A quantile exists only for 0 < p < 1, and F and t only for positive degrees of freedom and F ≥ 0
    // (definitions of the distributions).
    REQUIRE_THROWS_AS(pw::t_quantile(1.0, 5), std::domain_error);
    REQUIRE_THROWS_AS(pw::t_quantile(0.0, 5), std::domain_error);
    REQUIRE_THROWS_AS(pw::t_quantile(0.5, 0), std::domain_error);
    REQUIRE_THROWS_AS(pw::f_upper_tail(-1.0, 2, 10), std::domain_error);
    REQUIRE_THROWS_AS(pw::f_upper_tail(1.0, 0, 10), std::domain_error);
    // P(F > ∞) = 0 and P(F > 0) = 1 for any degrees of freedom.
    REQUIRE(pw::f_upper_tail(std::numeric_limits<double>::infinity(), 2, 10) == 0.0);
    REQUIRE(pw::f_upper_tail(0.0, 2, 10) == 1.0);
}
