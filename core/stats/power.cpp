// Replicates needed to detect a difference, and the power of a proposed trial (power.hpp for the formulas
// and their sources).
//
// Boost.Math evaluates the noncentral t (Benton & Krishnamoorthy's series) and the noncentral F (through
// the noncentral beta) with its default policy: long double internally, std::domain_error on arguments
// outside the support. Tail probabilities are taken as complements, never 1 − cdf, so that small powers
// keep their relative accuracy. Agreement with R 4.2.2's pt/pf with ncp is checked in
// tests/unit/test_power.cpp.
#include "core/stats/power.hpp"

#include <cmath>
#include <stdexcept>
#include <string>

#include <boost/math/distributions/fisher_f.hpp>
#include <boost/math/distributions/non_central_f.hpp>
#include <boost/math/distributions/non_central_t.hpp>
#include <boost/math/distributions/students_t.hpp>
#include <fmt/format.h>

#include "core/error.hpp"

namespace pw {

namespace {

void require_df(double df, const char* what) {
    if (!(df > 0) || std::isinf(df))
        throw std::domain_error(std::string(what) + ": degrees of freedom must be a positive finite number, got " +
                                std::to_string(df));
}

void require_finite(double x, const char* what) {
    if (!std::isfinite(x)) throw std::domain_error(std::string(what) + ": expected a finite number, got " + std::to_string(x));
}

}  // namespace

const char* plan_design_name(PlanDesign d) { return d == PlanDesign::Crd ? "crd" : "rcbd"; }

double noncentral_t_upper_tail(double t, double df, double ncp) {
    require_df(df, "noncentral_t_upper_tail");
    require_finite(ncp, "noncentral_t_upper_tail ncp");
    if (std::isnan(t)) throw std::domain_error("noncentral_t_upper_tail: t is NaN");
    if (std::isinf(t)) return t > 0 ? 0.0 : 1.0;
    const boost::math::non_central_t_distribution<double> dist(df, ncp);
    return boost::math::cdf(boost::math::complement(dist, t));
}

double noncentral_t_lower_tail(double t, double df, double ncp) {
    require_df(df, "noncentral_t_lower_tail");
    require_finite(ncp, "noncentral_t_lower_tail ncp");
    if (std::isnan(t)) throw std::domain_error("noncentral_t_lower_tail: t is NaN");
    if (std::isinf(t)) return t > 0 ? 1.0 : 0.0;
    const boost::math::non_central_t_distribution<double> dist(df, ncp);
    return boost::math::cdf(dist, t);
}

double noncentral_f_upper_tail(double f, double df1, double df2, double ncp) {
    require_df(df1, "noncentral_f_upper_tail df1");
    require_df(df2, "noncentral_f_upper_tail df2");
    require_finite(ncp, "noncentral_f_upper_tail ncp");
    if (ncp < 0) throw std::domain_error("noncentral_f_upper_tail: ncp must be >= 0, got " + std::to_string(ncp));
    if (std::isnan(f) || f < 0) throw std::domain_error("noncentral_f_upper_tail: F must be >= 0, got " + std::to_string(f));
    if (std::isinf(f)) return 0.0;
    const boost::math::non_central_f_distribution<double> dist(df1, df2, ncp);
    return boost::math::cdf(boost::math::complement(dist, f));
}

double f_quantile(double p, double df1, double df2) {
    require_df(df1, "f_quantile df1");
    require_df(df2, "f_quantile df2");
    if (!(p > 0 && p < 1))
        throw std::domain_error("f_quantile: probability must lie strictly between 0 and 1, got " + std::to_string(p));
    const boost::math::fisher_f_distribution<double> dist(df1, df2);
    return boost::math::quantile(dist, p);
}

void check_plan_question(const PlanQuestion& q) {
    if (q.treatments < 2)
        throw InputError(fmt::format("--treatments: a comparison needs at least 2 treatments, got {}", q.treatments));
    if (!(q.cv_percent > 0) || !std::isfinite(q.cv_percent))
        throw InputError(fmt::format("--cv: expected the coefficient of variation as a percentage above 0, got {}",
                                     q.cv_percent));
    if (!(q.difference_percent > 0) || !std::isfinite(q.difference_percent))
        throw InputError(fmt::format("--difference: expected the difference to detect as a percentage of the mean "
                                     "above 0, got {}", q.difference_percent));
    if (!(q.alpha > 0 && q.alpha < 1))
        throw InputError(fmt::format("--alpha: expected a significance level between 0 and 1, got {}", q.alpha));
    if (!(q.power > q.alpha && q.power < 1))
        throw InputError(fmt::format("--power: expected a power between alpha ({}) and 1, got {}", q.alpha, q.power));
}

int plan_error_df(PlanDesign d, int treatments, int replicates) {
    // Gomez & Gomez (1984), ch. 2: CRD error df t(r − 1); RCBD error df (t − 1)(r − 1).
    return d == PlanDesign::Crd ? treatments * (replicates - 1) : (treatments - 1) * (replicates - 1);
}

PlanPower plan_power(const PlanQuestion& q, int replicates) {
    check_plan_question(q);
    if (replicates < kMinPlanReplicates || replicates > kMaxPlanReplicates)
        throw InputError(fmt::format("--replicates: expected {} to {} replicates, got {}", kMinPlanReplicates,
                                     kMaxPlanReplicates, replicates));
    PlanPower p;
    const double r = replicates;
    p.replicates = replicates;
    p.error_df = plan_error_df(q.design, q.treatments, replicates);
    const double nu = p.error_df;

    // Pairwise t test: SED% = CV%·√(2/r), ncp = δ/SED; both tails of the two-sided test.
    p.sed_percent = q.cv_percent * std::sqrt(2.0 / r);
    p.t_ncp = q.difference_percent / p.sed_percent;
    const boost::math::students_t_distribution<double> t_dist(nu);
    p.t_critical = boost::math::quantile(boost::math::complement(t_dist, q.alpha / 2));
    p.lsd_percent = p.t_critical * p.sed_percent;
    p.t_power = noncentral_t_upper_tail(p.t_critical, nu, p.t_ncp) + noncentral_t_lower_tail(-p.t_critical, nu, p.t_ncp);

    // Overall F test: λ = r·δ²/(2·CV²) (least favourable configuration, power.hpp).
    p.f_df1 = q.treatments - 1;
    p.f_df2 = p.error_df;
    p.f_ncp = r * q.difference_percent * q.difference_percent / (2.0 * q.cv_percent * q.cv_percent);
    const boost::math::fisher_f_distribution<double> f_dist(p.f_df1, nu);
    p.f_critical = boost::math::quantile(boost::math::complement(f_dist, q.alpha));
    p.f_power = noncentral_f_upper_tail(p.f_critical, p.f_df1, nu, p.f_ncp);
    return p;
}

ReplicatePlan plan_replicates(const PlanQuestion& q) {
    check_plan_question(q);
    ReplicatePlan plan;
    // Power grows with r (the critical value falls as ν grows, the ncp grows as √r), so the first r that
    // reaches the target is the smallest. Only the t power is needed while searching.
    for (int r = kMinPlanReplicates; r <= kMaxPlanReplicates; ++r) {
        const double nu = plan_error_df(q.design, q.treatments, r);
        const double ncp = q.difference_percent / (q.cv_percent * std::sqrt(2.0 / r));
        const boost::math::students_t_distribution<double> t_dist(nu);
        const double tc = boost::math::quantile(boost::math::complement(t_dist, q.alpha / 2));
        const double power = noncentral_t_upper_tail(tc, nu, ncp) + noncentral_t_lower_tail(-tc, nu, ncp);
        if (power >= q.power) {
            plan.reached = true;
            plan.at = plan_power(q, r);
            return plan;
        }
    }
    plan.at = plan_power(q, kMaxPlanReplicates);
    return plan;
}

int replicates_for_error_df(PlanDesign d, int treatments, int min_df) {
    if (treatments < 2)
        throw InputError(fmt::format("--treatments: a comparison needs at least 2 treatments, got {}", treatments));
    int r = kMinPlanReplicates;
    while (plan_error_df(d, treatments, r) < min_df) ++r;
    return r;
}

std::optional<std::string> residual_df_warning(PlanDesign d, int treatments, int replicates) {
    const int df = plan_error_df(d, treatments, replicates);
    if (df >= kRecommendedResidualDf) return std::nullopt;
    const int enough = replicates_for_error_df(d, treatments, kRecommendedResidualDf);
    return fmt::format(
        "{} residual degrees of freedom ({} with {} treatments and {} replicates) is below the {} that EPPO "
        "standard PP 1/152(4) (2012), Design and analysis of efficacy evaluation trials, recommends; {} "
        "replicates would give {}.",
        df, d == PlanDesign::Crd ? "CRD" : "RCBD", treatments, replicates, kRecommendedResidualDf, enough,
        plan_error_df(d, treatments, enough));
}

}  // namespace pw
