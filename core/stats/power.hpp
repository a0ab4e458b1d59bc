// Planning a trial: how many replicates a CRD or RCBD needs to detect a given difference between two
// treatment means, and the power of a proposed number of replicates.
//
// Everything is expressed relative to the trial mean: the coefficient of variation CV% = 100·σ/μ and the
// difference to detect δ% = 100·(μ_a − μ_b)/μ, so σ and μ themselves never appear (only their ratio).
//
// Pairwise comparison (the question an agronomist asks: "will the LSD pick up a δ% difference?"):
//   SED% = CV%·√(2/r)                                   standard error of a difference of two means
//                                                       (Gomez & Gomez 1984, ch. 5, SED = √(2·MSE/r))
//   ncp  = δ% / SED%                                    noncentrality of the t statistic
//   power = P(T' > t_c) + P(T' < −t_c),  t_c = t_{1−α/2, ν}, T' ~ noncentral t(ν, ncp)
//                                                       (the exact power of the two-sided t test; R's
//                                                       power.t.test(strict = TRUE) computes the same)
// Overall F test of treatments, for the same configuration:
//   λ = r·Σ τ_i² / σ²  with the least favourable means having two treatments δ apart: the others at their
//   midpoint give the smallest Σ τ_i² = δ²/2, so λ = r·δ%² / (2·CV%²)
//                                                       (λ as R's power.anova.test: (groups−1)·n·between.var
//                                                       / within.var; least-favourable configuration from
//                                                       memory, e.g. Kastenbaum, Hoel & Bowman 1970,
//                                                       Biometrika 57, 421–430)
//   power = P(F' > F_{1−α; t−1, ν}),  F' ~ noncentral F(t−1, ν, λ)
// Error degrees of freedom ν: CRD t(r−1), RCBD (t−1)(r−1) (Gomez & Gomez 1984, ch. 2).
//
// Residual df below 12 is flagged: EPPO standard PP 1/152(4) (2012), "Design and analysis of efficacy
// evaluation trials", recommends at least 12 residual degrees of freedom.
//
// Distributions: Boost.Math non_central_t, non_central_f, fisher_f, students_t (kept inside power.cpp).
#pragma once
#include <optional>
#include <string>

namespace pw {

enum class PlanDesign { Crd, Rcbd };

// "crd" / "rcbd"; the spec's spelling of the two designs.
const char* plan_design_name(PlanDesign d);

struct PlanQuestion {
    PlanDesign design = PlanDesign::Rcbd;
    int treatments = 0;              // t >= 2
    double cv_percent = 0;           // CV% = 100·σ/μ, > 0
    double difference_percent = 0;   // δ as % of the mean, > 0
    double alpha = 0.05;             // level of the two-sided t test and of the F test, 0 < α < 1
    double power = 0.8;              // power wanted for the pairwise comparison, α < power < 1
};

// The power of one number of replicates (blocks for the RCBD).
struct PlanPower {
    int replicates = 0;
    int error_df = 0;                // ν
    double sed_percent = 0;          // SED as % of the mean
    double lsd_percent = 0;          // t_c·SED, the least significant difference as % of the mean
    double t_critical = 0;           // t_{1−α/2, ν}
    double t_ncp = 0;                // δ/SED
    double t_power = 0;              // two-sided, both tails
    int f_df1 = 0;                   // t − 1
    int f_df2 = 0;                   // ν
    double f_critical = 0;           // F_{1−α; t−1, ν}
    double f_ncp = 0;                // λ
    double f_power = 0;
};

// The smallest number of replicates whose pairwise power reaches the target.
struct ReplicatePlan {
    bool reached = false;            // false: not reached within kMaxPlanReplicates
    PlanPower at;                    // at the smallest r that reaches the power (or at the cap)
};

inline constexpr int kMinPlanReplicates = 2;
inline constexpr int kMaxPlanReplicates = 1000;
// EPPO PP 1/152(4) (2012): at least 12 residual degrees of freedom.
inline constexpr int kRecommendedResidualDf = 12;

// Throws InputError naming the option at fault (--treatments, --cv, --difference, --alpha, --power).
void check_plan_question(const PlanQuestion& q);

// ν for t treatments and r replicates: CRD t(r−1), RCBD (t−1)(r−1).
int plan_error_df(PlanDesign d, int treatments, int replicates);

// The power of r replicates; r >= 2, else InputError (--replicates).
PlanPower plan_power(const PlanQuestion& q, int replicates);

// Searches r = 2, 3, ... up to kMaxPlanReplicates (power rises with r: ν and ncp both grow).
ReplicatePlan plan_replicates(const PlanQuestion& q);

// The smallest r >= 2 whose error df reaches `min_df`.
int replicates_for_error_df(PlanDesign d, int treatments, int min_df);

// A sentence naming the rule and its source when ν < 12, nothing otherwise.
std::optional<std::string> residual_df_warning(PlanDesign d, int treatments, int replicates);

// Distribution functions behind the plan (Boost.Math; std::domain_error outside the support).
double noncentral_t_upper_tail(double t, double df, double ncp);             // P(T' > t)
double noncentral_t_lower_tail(double t, double df, double ncp);             // P(T' <= t)
double noncentral_f_upper_tail(double f, double df1, double df2, double ncp);  // P(F' > f)
double f_quantile(double p, double df1, double df2);                         // inverse CDF of F

}  // namespace pw
