// Plot codes: what a tag carries and what a technician types when the tag cannot be scanned.
//
//   human code   TRIAL-PLOT-C      e.g. SORG26-103-V   (printed under the symbol)
//   QR payload   PW1:TRIAL-PLOT-C  e.g. PW1:SORG26-103-V
// TRIAL is the trial code [A-Z0-9]{2,10}, PLOT the plot id in decimal, C the ISO/IEC 7064 MOD 37,36 check
// character computed over TRIAL followed by PLOT (the hyphens are not part of the checked data).
// Every character is in the QR alphanumeric set, so the symbol stays small (docs/tags.md).
// The "PW1:" prefix marks a scan (a scanner types it, a person does not) and versions the format.
#pragma once
#include <string>
#include <string_view>

namespace pw {

inline constexpr std::string_view kTagPrefix = "PW1:";

struct PlotCode {
    std::string trial;
    int plot = 0;
    bool scanned = false;     // true when the text carried the scan prefix
};

// ISO/IEC 7064 MOD 37,36 (hybrid system, alphabet 0-9 A-Z). `data` must be upper-case alphanumeric.
char iso7064_mod37_36_check(std::string_view data);
bool iso7064_mod37_36_valid(std::string_view data_with_check);

std::string human_code(const std::string& trial_code, int plot);
std::string qr_payload(const std::string& trial_code, int plot);

// Accepts a payload or a human code, upper or lower case, surrounding blanks ignored.
// Throws InputError: "not a plot code", "check character does not match (typing error?)".
PlotCode parse_plot_code(std::string_view text);

}  // namespace pw
