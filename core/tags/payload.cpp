// Plot codes: building the human code and QR payload of a plot, and reading back what a person typed or a
// scanner sent.
//
// Invariants of every code built here (docs/tags.md):
//   TRIAL  2-10 characters of 0-9 A-Z
//   PLOT   the plot id 1..999999 in decimal, no leading zero
//   C      ISO/IEC 7064 MOD 37,36 check character over TRIAL followed by PLOT (hyphens not checked)
// so the longest payload, "PW1:" + 10 + 1 + 6 + 1 + 1, is 23 characters, every one in the QR alphanumeric set.
// Parsing is the inverse and refuses anything that does not have exactly this shape; it is case-insensitive
// because people type codes in lower case, and it trims the blanks and line ends a keyboard-wedge scanner adds.
#include "core/tags/payload.hpp"

#include "core/error.hpp"

#include <fmt/format.h>

#include <vector>

namespace pw {
namespace {

constexpr std::size_t kTrialMinLen = 2;
constexpr std::size_t kTrialMaxLen = 10;
constexpr int kPlotMin = 1;
constexpr int kPlotMax = 999999;
constexpr std::size_t kPlotMaxDigits = 6;

// What a plot code looks like, appended to every refusal so the person knows what to type instead.
constexpr std::string_view kShapeHint =
    "a plot code looks like SORG26-103-V: the trial code (2-10 letters or digits), the plot number "
    "(1-999999) and one check character, joined by hyphens; a scanned tag adds the prefix PW1:";

bool is_upper_alnum(char ch) { return (ch >= '0' && ch <= '9') || (ch >= 'A' && ch <= 'Z'); }
bool is_digit(char ch) { return ch >= '0' && ch <= '9'; }
bool is_blank(char ch) { return ch == ' ' || ch == '\t' || ch == '\r' || ch == '\n' || ch == '\v' || ch == '\f'; }

bool valid_trial_code(std::string_view s) {
    if (s.size() < kTrialMinLen || s.size() > kTrialMaxLen) return false;
    for (char ch : s)
        if (!is_upper_alnum(ch)) return false;
    return true;
}

// Quotes what the person typed, cut short if a scanner sent something long (a URL, a whole label); control
// characters are shown as \xNN so that the message stays one printable line.
std::string quoted(std::string_view text) {
    constexpr std::size_t kMaxEcho = 40;
    std::string out = "\"";
    for (char ch : text.substr(0, kMaxEcho)) {
        const auto byte = static_cast<unsigned char>(ch);
        if (byte < 0x20 || byte == 0x7F)
            out += fmt::format("\\x{:02X}", byte);
        else
            out += ch;
    }
    out += text.size() > kMaxEcho ? "...\"" : "\"";
    return out;
}

[[noreturn]] void refuse(std::string_view text, std::string_view reason) {
    throw InputError(fmt::format("{} is not a plot code ({}); {}", quoted(text), reason, kShapeHint));
}

void require_valid(const std::string& trial_code, int plot) {
    if (!valid_trial_code(trial_code))
        throw InputError(fmt::format("trial code \"{}\": expected {} to {} characters, each A-Z or 0-9",
                                     trial_code, kTrialMinLen, kTrialMaxLen));
    if (plot < kPlotMin || plot > kPlotMax)
        throw InputError(fmt::format("plot id {} of trial {}: expected {} to {}", plot, trial_code, kPlotMin,
                                     kPlotMax));
}

std::vector<std::string_view> split_on_hyphens(std::string_view s) {
    std::vector<std::string_view> parts;
    std::size_t start = 0;
    for (;;) {
        const std::size_t dash = s.find('-', start);
        if (dash == std::string_view::npos) {
            parts.push_back(s.substr(start));
            return parts;
        }
        parts.push_back(s.substr(start, dash - start));
        start = dash + 1;
    }
}

}  // namespace

std::string human_code(const std::string& trial_code, int plot) {
    require_valid(trial_code, plot);
    const std::string digits = std::to_string(plot);
    return fmt::format("{}-{}-{}", trial_code, digits, iso7064_mod37_36_check(trial_code + digits));
}

std::string qr_payload(const std::string& trial_code, int plot) {
    return std::string(kTagPrefix) + human_code(trial_code, plot);
}

PlotCode parse_plot_code(std::string_view text) {
    std::size_t first = 0;
    std::size_t last = text.size();
    while (first < last && is_blank(text[first])) ++first;
    while (last > first && is_blank(text[last - 1])) --last;
    const std::string_view trimmed = text.substr(first, last - first);
    if (trimmed.empty()) refuse(trimmed, "nothing was typed");

    std::string upper(trimmed);
    for (char& ch : upper) {
        if (static_cast<unsigned char>(ch) >= 0x80) refuse(trimmed, "it holds a character outside A-Z, 0-9 and -");
        if (ch >= 'a' && ch <= 'z') ch = static_cast<char>(ch - 'a' + 'A');
    }

    PlotCode code;
    std::string_view body = upper;
    if (body.substr(0, kTagPrefix.size()) == kTagPrefix) {
        code.scanned = true;
        body.remove_prefix(kTagPrefix.size());
    } else if (body.size() > 3 && body.substr(0, 2) == "PW" && body.find(':') != std::string_view::npos) {
        refuse(trimmed, fmt::format("only the tag format {} is known", kTagPrefix));
    }

    const std::vector<std::string_view> parts = split_on_hyphens(body);
    if (parts.size() != 3) refuse(trimmed, "expected three parts separated by two hyphens");
    const std::string_view trial = parts[0];
    const std::string_view plot = parts[1];
    const std::string_view check = parts[2];

    if (!valid_trial_code(trial)) refuse(trimmed, "the trial code must be 2 to 10 letters or digits");
    if (plot.empty() || plot.size() > kPlotMaxDigits) refuse(trimmed, "the plot number must have 1 to 6 digits");
    for (char ch : plot)
        if (!is_digit(ch)) refuse(trimmed, "the plot number must be digits only");
    if (plot.front() == '0') refuse(trimmed, "the plot number must not start with 0");
    if (check.size() != 1 || !is_upper_alnum(check.front()))
        refuse(trimmed, "the check character must be one letter or digit");

    std::string checked;
    checked.reserve(trial.size() + plot.size() + 1);
    checked.append(trial).append(plot).append(check);
    if (!iso7064_mod37_36_valid(checked))
        throw InputError(fmt::format(
            "{}: check character does not match (typing error?): the code has a typing or reading error; "
            "type it again from the tag or scan it",
            quoted(trimmed)));

    code.trial = std::string(trial);
    code.plot = std::stoi(std::string(plot));
    return code;
}

}  // namespace pw
