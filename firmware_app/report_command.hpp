// The trial report of a trial database, as `plotwright report` writes it (cmd_report.cpp, docs/report.md),
// for the commands that write one too (`plotwright demo`).
#pragma once
#include <string>

namespace pw {
class Store;
}

namespace pw::app {

// One self-contained HTML page: the trial's facts and every numeric trait's maps, means, ANOVA and data
// checks. `blind` shows treatments as T1..Tn (a copy for scorers); `now_utc` is printed as the time written.
std::string trial_report_html(const pw::Store& store, bool blind, const std::string& now_utc);

}  // namespace pw::app
