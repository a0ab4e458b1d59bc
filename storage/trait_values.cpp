// Values in force per plot for a trait or a yield (trait_values.hpp).
#include "storage/trait_values.hpp"

#include <fmt/format.h>

#include "core/error.hpp"
#include "core/traits/yield.hpp"

namespace pw {
namespace {

// The decimals a yield is shown with: grams in a t/ha figure, whole kilograms per hectare, grams per plot.
int yield_decimals(YieldUnit u) { return u == YieldUnit::KilogramsPerHectare ? 0 : 3; }

struct Recorded {
    std::map<int, const ObservationRecord*> values;
    std::map<int, std::string> conflicts;
};

Recorded recorded(const ResolvedObservations& resolved, const std::string& trait) {
    Recorded r;
    for (const ObservationRow& row : resolved.rows)
        if (row.record.obs.trait == trait && row.record.obs.number) r.values.emplace(row.record.obs.plot, &row.record);
    for (const Conflict& c : resolved.conflicts) {
        if (c.trait != trait) continue;
        std::string values;
        for (const ConflictValue& v : c.values) values += (values.empty() ? "" : ", ") + v.record.obs.value;
        r.conflicts[c.plot] = fmt::format("{} values in conflict ({}), left out until resolved", trait, values);
    }
    return r;
}

}  // namespace

TraitValues trait_values(const StoredTrial& trial, const ResolvedObservations& resolved, const std::string& name) {
    TraitValues out;
    for (const TraitSpec& t : trial.spec.traits) {
        if (t.name != name) continue;
        out.trait = t;
        Recorded r = recorded(resolved, name);
        for (const auto& [plot, rec] : r.values) out.values.emplace(plot, *rec);
        out.conflicts = std::move(r.conflicts);
        return out;
    }
    for (const YieldSpec& y : trial.spec.yields) {
        if (y.name != name) continue;
        out.yield = &y;
        out.trait.name = y.name;
        out.trait.label = y.label;
        out.trait.unit = to_string(y.unit);
        out.trait.kind = TraitKind::Number;
        out.trait.decimals = yield_decimals(y.unit);
        const Recorded weight = recorded(resolved, y.weight);
        const Recorded moisture = y.moisture.empty() ? Recorded{} : recorded(resolved, y.moisture);
        for (const auto* conflicts : {&weight.conflicts, &moisture.conflicts})
            for (const auto& [plot, why] : *conflicts) out.conflicts.emplace(plot, why);
        for (const auto& [plot, w] : weight.values) {
            if (out.conflicts.count(plot)) continue;
            auto m = moisture.values.find(plot);
            const ObservationRecord* mrec = m == moisture.values.end() ? nullptr : m->second;
            PlotYield py;
            try {
                py = plot_yield(y, w->obs.number, mrec ? mrec->obs.number : std::nullopt);
            } catch (const InputError& e) {
                throw InputError(fmt::format("{}: plot {}: {}", y.name, plot, e.what()));
            }
            if (!py.value) {
                out.not_computed.emplace(plot, py.why);
                continue;
            }
            // Dated, attributed and numbered like the later of the two recordings it comes from.
            const ObservationRecord* later = mrec && mrec->obs.recorded_utc > w->obs.recorded_utc ? mrec : w;
            ObservationRecord rec;
            rec.id = later->id;
            rec.obs.plot = plot;
            rec.obs.trait = y.name;
            rec.obs.number = *py.value;
            rec.obs.value = fmt::format("{:.{}f}", *py.value, out.trait.decimals);
            rec.obs.recorded_utc = later->obs.recorded_utc;
            rec.obs.device = later->obs.device;
            rec.obs.observer = later->obs.observer;
            out.values.emplace(plot, std::move(rec));
        }
        return out;
    }
    std::string names;
    for (const TraitSpec& t : trial.spec.traits) names += (names.empty() ? "" : ", ") + t.name;
    for (const YieldSpec& y : trial.spec.yields) names += (names.empty() ? "" : ", ") + y.name;
    throw InputError(fmt::format("--trait {}: trial {} has no such trait or yield (it has: {})", name,
                                 trial.spec.code, names));
}

}  // namespace pw
