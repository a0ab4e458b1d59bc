// The randomization certificate (core/design/certificate.hpp): SHA-256 against published test vectors,
// verification outcomes for untouched, edited, re-signed and foreign-algorithm layouts, and a pinned layout
// and digest that guard against a platform giving another layout for the same spec and seed.
//
// The outside sources: FIPS 180-4 (Secure Hash Standard) and NIST's published SHA-256 examples for the
// digests, each also reproduced with GNU coreutils sha256sum 9.1; the canonical text itself is rebuilt
// independently (Python, from `plotwright plots` and docs/certificate.md) by tests/cmake/verify.cmake.
#include <catch2/catch.hpp>

#include <algorithm>
#include <set>
#include <string>
#include <vector>

#include "core/design/certificate.hpp"
#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"

namespace {

// An invented trial: 5 entries in 4 complete blocks, gradient increasing northward.
constexpr const char* kSpec = R"toml(
[trial]
code = "CERT1"
title = "Certificate test"
site = "Test field"
crop = "wheat"
design = "rcbd"
blocks = 4

[field]
plot_length_m = 6.0
plot_width_m = 1.5
alley_m = 1.0
plot_gap_m = 0.25

[gradient]
bearing_deg = 0
label = "slope, rising northward"

[[treatments]]
label = "Check"
check = true
[[treatments]]
label = "N40"
[[treatments]]
label = "N80"
[[treatments]]
label = "N120"
[[treatments]]
label = "N160"

[[traits]]
name = "yield"
unit = "t/ha"
kind = "number"
)toml";

pw::TrialSpec spec() { return pw::parse_trial_spec(kSpec, "cert.toml"); }

std::vector<int> plot_ids(const std::vector<pw::PlotDifference>& d) {
    std::vector<int> ids;
    for (const auto& x : d) ids.push_back(x.plot);
    return ids;
}

}  // namespace

TEST_CASE("SHA-256 gives the digests of the FIPS 180-4 examples", "[certificate][sha256]") {
    // Source: FIPS 180-4 and NIST's "SHA-256" example document: "abc" (one block) and the 448-bit two-block
    // message; the empty message and one million 'a' (FIPS 180-2 appendix B.3) from memory. Every value
    // reproduced here with coreutils sha256sum 9.1 (printf %s MESSAGE | sha256sum).
    CHECK(pw::sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    CHECK(pw::sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
          "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
    CHECK(pw::sha256_hex("") == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
    CHECK(pw::sha256_hex(std::string(1000000, 'a')) ==
          "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}

TEST_CASE("An untouched layout verifies against its seed and its digest", "[certificate][verify]") {
    const pw::TrialSpec s = spec();
    const pw::Layout l = pw::design_trial(s, 77);
    const pw::VerifyReport r = pw::verify_layout(s, l, pw::layout_digest(s, l));
    CAPTURE(r.message);
    REQUIRE(r.outcome == pw::VerifyOutcome::Verified);
    REQUIRE(r.ok());
    REQUIRE(r.differences.empty());
    REQUIRE(r.digest_of_stored == pw::layout_digest(s, l));
    REQUIRE(r.digest_of_derived == r.digest_of_stored);
    CHECK_THAT(r.message, Catch::Contains("the one randomization gave") && Catch::Contains("seed 77"));
}

TEST_CASE("Two swapped treatments are found and both plots named", "[certificate][verify]") {
    const pw::TrialSpec s = spec();
    const pw::Layout original = pw::design_trial(s, 77);
    pw::Layout edited = original;
    // Swap the treatments of the first plot and of another plot of the same block holding another treatment.
    auto& a = edited.plots[0];
    auto it = std::find_if(edited.plots.begin() + 1, edited.plots.end(),
                           [&](const pw::PlotPlacement& p) { return p.block == a.block && p.treatment != a.treatment; });
    REQUIRE(it != edited.plots.end());
    std::swap(a.treatment, it->treatment);
    const int lo = std::min(a.id, it->id), hi = std::max(a.id, it->id);

    // The digest stored at design time is the untouched layout's.
    const pw::VerifyReport r = pw::verify_layout(s, edited, pw::layout_digest(s, original));
    CAPTURE(r.message);
    REQUIRE(r.outcome == pw::VerifyOutcome::PlotsEdited);
    REQUIRE_FALSE(r.ok());
    REQUIRE(plot_ids(r.differences) == std::vector<int>{lo, hi});
    for (const auto& d : r.differences) CHECK_THAT(d.what, Catch::Contains("treatment '") && Catch::Contains("from the seed"));
    CHECK_THAT(r.message, Catch::Contains("edited") && Catch::Contains(std::to_string(lo)) &&
                              Catch::Contains(std::to_string(hi)));
    CHECK(r.digest_of_stored != r.digest_of_derived);
}

TEST_CASE("A plot moved on the ground by 25 cm is found by its millimetre coordinates", "[certificate][verify]") {
    const pw::TrialSpec s = spec();
    const pw::Layout original = pw::design_trial(s, 5);
    pw::Layout edited = original;
    edited.plots[3].x_m += 0.25;
    const pw::VerifyReport r = pw::verify_layout(s, edited, pw::layout_digest(s, original));
    REQUIRE(r.outcome == pw::VerifyOutcome::PlotsEdited);
    REQUIRE(plot_ids(r.differences) == std::vector<int>{original.plots[3].id});
    CHECK_THAT(r.differences[0].what, Catch::Contains("x_mm"));
}

TEST_CASE("A stored digest that is not the stored plots' is reported as such", "[certificate][verify]") {
    const pw::TrialSpec s = spec();
    const pw::Layout l = pw::design_trial(s, 77);
    std::string digest = pw::layout_digest(s, l);
    digest[10] = digest[10] == '0' ? '1' : '0';
    const pw::VerifyReport r = pw::verify_layout(s, l, digest);
    REQUIRE(r.outcome == pw::VerifyOutcome::DigestMismatch);
    REQUIRE_FALSE(r.ok());
    CHECK_THAT(r.message, Catch::Contains("stored digest does not match") && Catch::Contains(digest));
}

TEST_CASE("A layout made by another algorithm version is not re-derived, and both versions are named",
          "[certificate][verify]") {
    const pw::TrialSpec s = spec();
    pw::Layout l = pw::design_trial(s, 77);
    const std::string ours = l.algorithm;
    l.algorithm = "mt19937_64+lemire+fisher-yates/0;design=rcbd/0";
    const pw::VerifyReport r = pw::verify_layout(s, l, pw::layout_digest(s, l));
    REQUIRE(r.outcome == pw::VerifyOutcome::AlgorithmDiffers);
    REQUIRE_FALSE(r.ok());
    REQUIRE(r.program_algorithm == ours);
    CHECK_THAT(r.message, Catch::Contains(l.algorithm) && Catch::Contains(ours));
}

TEST_CASE("A trial stored without a digest still verifies by re-derivation, and says so", "[certificate][verify]") {
    const pw::TrialSpec s = spec();
    const pw::Layout l = pw::design_trial(s, 77);
    const pw::VerifyReport r = pw::verify_layout(s, l, std::nullopt);
    REQUIRE(r.outcome == pw::VerifyOutcome::NoDigest);
    REQUIRE(r.ok());
    CHECK_THAT(r.message, Catch::Contains("no digest"));
}

TEST_CASE("Labels with tabs, newlines and backslashes stay inside their field of the canonical text",
          "[certificate]") {
    pw::TrialSpec s = spec();
    s.treatments[1].label = "N\t40\\\nx";
    const pw::Layout l = pw::design_trial(s, 77);
    const std::string text = pw::certificate_text(s, l);
    // docs/certificate.md: 5 header lines, then one line per plot, every line ended by LF, fields by one TAB.
    REQUIRE(std::count(text.begin(), text.end(), '\n') == static_cast<long>(5 + l.plots.size()));
    REQUIRE(text.find("N\\t40\\\\\\nx") != std::string::npos);
    std::size_t start = text.find('\n', text.find("\ncolumns\t") + 1) + 1;
    while (start < text.size()) {
        const std::size_t end = text.find('\n', start);
        CHECK(std::count(text.begin() + static_cast<long>(start), text.begin() + static_cast<long>(end), '\t') == 6);
        start = end + 1;
    }
}

TEST_CASE("Cross-platform guard: seed 20260614 gives the pinned layout and digest", "[certificate][pin][cross-platform]") {
    // A pin guarding the platform: values produced by this code on x86-64 (g++ 12, Debian 12), and rebuilt
    // outside it by tests/tools/certificate_pin.py (mt19937_64 and Fisher-Yates in Python integers, the
    // geometry worked by hand, SHA-256 by Python's hashlib), which prints the same map and digest. The same
    // test runs on 64-bit ARM under qemu (`./run cross-test`, docs/handheld.md): a platform difference in the
    // engine, the shuffles or the geometry changes the plot-to-treatment map or the digest.
    const pw::TrialSpec s = spec();
    const pw::Layout l = pw::design_trial(s, 20260614);
    std::vector<std::pair<int, std::string>> got;
    for (const auto& p : l.plots) got.emplace_back(p.id, s.treatments[static_cast<std::size_t>(p.treatment)].label);
    const std::vector<std::pair<int, std::string>> pinned = {
        {101, "N160"}, {102, "Check"}, {103, "N120"}, {104, "N40"},  {105, "N80"},
        {201, "Check"}, {202, "N160"}, {203, "N80"},  {204, "N40"},  {205, "N120"},
        {301, "N40"},  {302, "N80"},   {303, "N160"}, {304, "N120"}, {305, "Check"},
        {401, "Check"}, {402, "N40"},  {403, "N160"}, {404, "N120"}, {405, "N80"}};
    CHECK(got == pinned);
    CHECK(l.algorithm == "mt19937_64+lemire+fisher-yates/1;design=rcbd/1");
    CHECK(pw::layout_digest(s, l) == "fb16e6b81b204b7277f0890977e2e0649021134c4798bc438814185f4ecd4a49");
}
