// Tail probabilities of F and of Student's t, and quantiles of t: the distributions the analyses need.
//
// Both come from Boost.Math (fisher_f, students_t) with its default policy, which evaluates in long
// double and throws std::domain_error on arguments outside the distribution's support. Boost stays
// inside this file so that its headers (slow to compile) do not spread through the project.
//
// Accuracy: against R 4.2.2's pf(lower.tail = FALSE) and qt, agreement is better than 1e-12 relative
// on the reference cases in tests/data/stats (checked by tests/unit/test_distributions.cpp).
#include <cmath>
#include <limits>
#include <stdexcept>
#include <string>

#include <boost/math/distributions/fisher_f.hpp>
#include <boost/math/distributions/students_t.hpp>

#include "core/stats/anova.hpp"

namespace pw {

namespace {

void require_positive_df(double df, const char* what) {
    if (!(df > 0) || std::isinf(df)) {
        throw std::domain_error(std::string(what) + ": degrees of freedom must be a positive finite number, got " +
                                std::to_string(df));
    }
}

}  // namespace

// P(F > f) for F with (df1, df2) degrees of freedom: the complement of the CDF, taken directly
// (not 1 − cdf) so that small tail probabilities keep their relative accuracy.
double f_upper_tail(double f, double df1, double df2) {
    require_positive_df(df1, "f_upper_tail df1");
    require_positive_df(df2, "f_upper_tail df2");
    if (std::isnan(f) || f < 0) {
        throw std::domain_error("f_upper_tail: F must be zero or positive, got " + std::to_string(f));
    }
    if (std::isinf(f)) return 0.0;
    const boost::math::fisher_f_distribution<double> dist(df1, df2);
    return boost::math::cdf(boost::math::complement(dist, f));
}

// The value t with P(T <= t) = p for Student's t on df degrees of freedom (df may be fractional).
double t_quantile(double p, double df) {
    require_positive_df(df, "t_quantile");
    if (!(p > 0 && p < 1)) {
        throw std::domain_error("t_quantile: probability must lie strictly between 0 and 1, got " +
                                std::to_string(p));
    }
    const boost::math::students_t_distribution<double> dist(df);
    return boost::math::quantile(dist, p);
}

// P(T > t) for Student's t on df degrees of freedom, the complement taken directly.
double t_upper_tail(double t, double df) {
    require_positive_df(df, "t_upper_tail");
    if (std::isnan(t)) throw std::domain_error("t_upper_tail: t is not a number");
    if (std::isinf(t)) return t > 0 ? 0.0 : 1.0;
    const boost::math::students_t_distribution<double> dist(df);
    return boost::math::cdf(boost::math::complement(dist, t));
}

}  // namespace pw
