// `plotwright plan`: how many replicates a CRD or RCBD needs to detect a difference, or the power of a
// proposed number of replicates. The statistics live in core/stats/power.hpp; this file parses and prints.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <iostream>
#include <optional>

#include "core/stats/power.hpp"
#include "firmware_app/app.hpp"

namespace pw::app {
namespace {

struct PlanOptions {
    std::string design;
    PlanQuestion q;
    std::optional<int> replicates;
    bool json = false;
};

const char* kFNcpSource =
    "lambda = r * d^2 / (2 * cv^2): two treatment means d apart, the others midway (the least favourable "
    "configuration); as R's power.anova.test, lambda = (groups - 1) * n * between.var / within.var";

nlohmann::json plan_json(const PlanOptions& o, const PlanPower& p, bool reached, const std::optional<std::string>& warning) {
    nlohmann::json j{
        {"design", plan_design_name(o.q.design)},
        {"treatments", o.q.treatments},
        {"cv_percent", o.q.cv_percent},
        {"difference_percent", o.q.difference_percent},
        {"alpha", o.q.alpha},
        {"power_wanted", o.q.power},
        {"replicates", p.replicates},
        {"replicates_given", o.replicates.has_value()},
        {"power_reached", reached},
        {"error_df", p.error_df},
        {"sed_percent", p.sed_percent},
        {"lsd_percent", p.lsd_percent},
        {"pairwise_t", {{"df", p.error_df}, {"critical", p.t_critical}, {"ncp", p.t_ncp}, {"power", p.t_power}}},
        {"overall_f",
         {{"df1", p.f_df1}, {"df2", p.f_df2}, {"critical", p.f_critical}, {"ncp", p.f_ncp}, {"power", p.f_power},
          {"ncp_source", kFNcpSource}}},
        {"warnings", nlohmann::json::array()}};
    if (warning) j["warnings"].push_back(*warning);
    return j;
}

std::string plan_text(const PlanOptions& o, const PlanPower& p, bool reached) {
    const bool rcbd = o.q.design == PlanDesign::Rcbd;
    std::string s = fmt::format(
        "{}: {} treatments, CV {:g}%, difference to detect {:g}% of the mean, alpha {:g}, power wanted {:g}\n",
        rcbd ? "RCBD" : "CRD", o.q.treatments, o.q.cv_percent, o.q.difference_percent, o.q.alpha, o.q.power);
    if (o.replicates)
        s += fmt::format("with {} {}: the pairwise power {} the {:g} wanted\n", p.replicates,
                         rcbd ? "blocks" : "replicates", p.t_power >= o.q.power ? "reaches" : "falls short of",
                         o.q.power);
    else if (reached)
        s += fmt::format("replicates needed: {}{}\n", p.replicates, rcbd ? " (blocks)" : " of each treatment");
    else
        s += fmt::format("the power is not reached within {} replicates; at {}:\n", kMaxPlanReplicates, p.replicates);
    s += fmt::format("  error df {} = {}; SED {:.2f}% of the mean; LSD ({:g}) {:.2f}% of the mean\n", p.error_df,
                     rcbd ? "(t-1)(r-1)" : "t(r-1)", p.sed_percent, o.q.alpha, p.lsd_percent);
    s += fmt::format("  two treatments, t test: noncentrality {:.4f}, critical t {:.4f}, power {:.4f} "
                     "(noncentral t, two-sided)\n",
                     p.t_ncp, p.t_critical, p.t_power);
    s += fmt::format("  all treatments, F test: F({}, {}), noncentrality {:.4f} (two means {:g}% apart, the others "
                     "midway), critical F {:.4f}, power {:.4f} (noncentral F)\n",
                     p.f_df1, p.f_df2, p.f_ncp, o.q.difference_percent, p.f_critical, p.f_power);
    return s;
}

void run_plan(PlanOptions o) {
    o.q.design = o.design == "crd" ? PlanDesign::Crd : PlanDesign::Rcbd;
    check_plan_question(o.q);
    PlanPower p;
    bool reached = false;
    if (o.replicates) {
        p = plan_power(o.q, *o.replicates);
        reached = p.t_power >= o.q.power;
    } else {
        const ReplicatePlan plan = plan_replicates(o.q);
        p = plan.at;
        reached = plan.reached;
    }
    const auto warning = residual_df_warning(o.q.design, o.q.treatments, p.replicates);
    if (o.json) {
        std::cout << plan_json(o, p, reached, warning).dump(2) << "\n";
    } else {
        std::cout << plan_text(o, p, reached);
        if (warning) std::cerr << "warning: " << *warning << "\n";
    }
    // Not reaching the power with as many replicates as the search allows is a failed plan.
    if (!o.replicates && !reached) {
        if (!o.json)
            std::cerr << fmt::format("plotwright: plan: {:g}% cannot be detected with power {:g} within {} replicates "
                                     "at CV {:g}%\n",
                                     o.q.difference_percent, o.q.power, kMaxPlanReplicates, o.q.cv_percent);
        throw ExitStatus{1};
    }
}

}  // namespace

void add_plan_command(CLI::App& app) {
    auto o = std::make_shared<PlanOptions>();
    auto* plan = app.add_subcommand(
        "plan", "Replicates needed to detect a difference between two treatments, or the power of a proposed trial");
    plan->add_option("--design", o->design, "crd or rcbd")->required()->check(CLI::IsMember({"crd", "rcbd"}));
    plan->add_option("--treatments", o->q.treatments, "Number of treatments (at least 2)")->required();
    plan->add_option("--cv", o->q.cv_percent, "Expected coefficient of variation, % of the mean")->required();
    plan->add_option("--difference", o->q.difference_percent, "Difference to detect, % of the mean")->required();
    plan->add_option("--alpha", o->q.alpha, "Significance level (two-sided), default 0.05");
    plan->add_option("--power", o->q.power, "Power wanted for the pairwise comparison, default 0.8");
    plan->add_option("--replicates", o->replicates,
                     "A proposed number of replicates (blocks for rcbd): report its error df and power instead");
    plan->add_flag("--json", o->json, "Print the result as JSON");
    plan->callback([o] { run_plan(*o); });
}

}  // namespace pw::app
