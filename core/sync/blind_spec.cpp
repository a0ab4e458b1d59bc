// Neutral treatment codes for the handheld of a blind trial (blind_spec.hpp).
#include "core/sync/blind_spec.hpp"

#include <sstream>

#include <fmt/format.h>

#include "core/error.hpp"
#include "core/spec/tomlpp.hpp"
#include "core/spec/trial_spec.hpp"

namespace pw {

std::string blind_spec_toml(const std::string& toml_text, const std::string& source) {
    const TrialSpec original = parse_trial_spec(toml_text, source);  // throws SpecError for a bad spec
    toml::table root;
    try {
        root = toml::parse(toml_text, source);
    } catch (const toml::parse_error& e) {
        throw SpecError(source, "", std::string(e.description()));
    }
    const bool keep_checks = original.design == "augmented";

    if (toml::array* ts = root["treatments"].as_array()) {
        const int width = ts->size() > 99 ? 3 : 2;
        for (std::size_t i = 0; i < ts->size(); ++i) {
            toml::table* t = (*ts)[i].as_table();
            if (!t) continue;
            t->insert_or_assign("label", fmt::format("T{:0{}}", i + 1, width));
            t->erase("description");
            if (!keep_checks) t->erase("check");
        }
    }
    if (toml::array* fs = root["factors"].as_array()) {
        for (std::size_t k = 0; k < fs->size(); ++k) {
            toml::table* f = (*fs)[k].as_table();
            if (!f) continue;
            const char letter = static_cast<char>('A' + k);
            f->insert_or_assign("name", std::string(1, letter));
            if (toml::array* levels = (*f)["levels"].as_array()) {
                const std::size_t n = levels->size();
                toml::array coded;
                for (std::size_t j = 0; j < n; ++j) coded.push_back(fmt::format("{}{}", letter, j + 1));
                f->insert_or_assign("levels", std::move(coded));
            }
        }
    }
    if (toml::table* trial = root["trial"].as_table(); trial && trial->contains("extra_control"))
        trial->insert_or_assign("extra_control", "X0");

    std::ostringstream out;
    out << "# Handheld copy of a blind trial: treatment labels replaced by neutral codes.\n" << root << "\n";
    const std::string text = out.str();
    const TrialSpec blind = parse_trial_spec(text, source + " (blind copy)");
    if (blind.code != original.code || blind.treatments.size() != original.treatments.size() ||
        blind.traits.size() != original.traits.size() || blind.design != original.design)
        throw DesignError(source + ": the blind copy of the spec does not describe the same trial (treatments, traits "
                                   "or design differ)");
    return text;
}

}  // namespace pw
