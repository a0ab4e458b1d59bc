// Sync bundle format, audit chain and blind spec copies (core/sync/).
//
// Outside sources the checks rest on:
//   - The byte layout of docs/sync.md ("Bundle format"), assembled independently with Python 3's struct
//     module and hashed with its hashlib (FIPS 180-4 SHA-256): the bundle below is 127 bytes, its checksum
//     d8578d36...6c97aed (the value printed by that script, pinned here).
//   - The audit chain's link hashes, computed with coreutils sha256sum over the canonical text written out by
//     hand from docs/station.md (`printf '<64 zeros>\nplotwright-audit/1\n1\n...' | sha256sum`).
//   - SHA-256 of the empty string, e3b0c442...b855 (FIPS 180-4 examples; NIST CSRC), used as a trial digest.
//   - RFC 4180-independent facts of the trade: a blind trial shows no treatment label to the technician
//     (DOMAIN: blinding, common practice).
#include <catch2/catch.hpp>

#include <string>

#include "core/spec/trial_spec.hpp"
#include "core/sync/audit_chain.hpp"
#include "core/sync/blind_spec.hpp"
#include "core/sync/bundle.hpp"

using namespace pw;

namespace {

constexpr const char* kEmptySha = "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855";

BundleHeader sample_header() {
    BundleHeader h;
    h.kind = BundleKind::FromDevice;
    h.trial_code = "SORG26";
    h.trial_digest = kEmptySha;
    h.device = "hh-1";
    h.seq = 3;
    h.created_utc = "2026-06-14T09:31:05Z";
    return h;
}

std::string to_hex(const std::string& raw) {
    static constexpr char k[] = "0123456789abcdef";
    std::string s;
    for (unsigned char c : raw) {
        s += k[c >> 4];
        s += k[c & 15];
    }
    return s;
}

BundleFault fault_of(const std::string& bytes) {
    try {
        decode_bundle(bytes, "x.bundle");
    } catch (const BundleError& e) {
        return e.fault;
    }
    FAIL("the bundle was accepted");
    return BundleFault::NotABundle;
}

}  // namespace

TEST_CASE("A bundle is laid out byte for byte as docs/sync.md says", "[sync][bundle]") {
    const std::string b = encode_bundle(sample_header(), "abc");
    // Python struct + hashlib, from the documented layout (see the file comment).
    CHECK(b.size() == 127);
    CHECK(b.substr(0, 8) == "PLWTSYNC");
    CHECK(to_hex(b.substr(8, 4)) == "00010106");   // version 1 (big-endian), kind 1, code length 6
    CHECK(b.substr(12, 6) == "SORG26");
    CHECK(to_hex(b.substr(18, 32)) == kEmptySha);
    CHECK(to_hex(b.substr(50, 1)) == "04");
    CHECK(b.substr(51, 4) == "hh-1");
    CHECK(to_hex(b.substr(55, 8)) == "0000000000000003");
    CHECK(b.substr(64, 20) == "2026-06-14T09:31:05Z");
    CHECK(to_hex(b.substr(84, 8)) == "0000000000000003");
    CHECK(b.substr(92, 3) == "abc");
    CHECK(to_hex(b.substr(95)) == "d8578d3679cbe59abbc63d1791efe1741e6e84875d84b62162bfcacca6c97aed");

    const Bundle d = decode_bundle(b, "x.bundle");
    CHECK(d.header.trial_code == "SORG26");
    CHECK(d.header.device == "hh-1");
    CHECK(d.header.seq == 3);
    CHECK(d.header.trial_digest == kEmptySha);
    CHECK(d.payload == "abc");
    CHECK(d.checksum_hex == "d8578d3679cbe59abbc63d1791efe1741e6e84875d84b62162bfcacca6c97aed");
}

TEST_CASE("Every truncation of a bundle is refused as truncated, and names the file", "[sync][bundle]") {
    const std::string b = encode_bundle(sample_header(), "a payload of some length");
    for (std::size_t n = 8; n < b.size(); ++n) {
        CAPTURE(n);
        try {
            decode_bundle(b.substr(0, n), "field-day.bundle");
            FAIL("accepted");
        } catch (const BundleError& e) {
            CHECK(e.fault == BundleFault::Truncated);
            CHECK(std::string(e.what()).rfind("field-day.bundle: truncated", 0) == 0);
        }
    }
    CHECK(fault_of(b.substr(0, 5)) == BundleFault::NotABundle);
    CHECK(fault_of(b + "x") == BundleFault::Oversized);
}

TEST_CASE("Every single flipped byte after the magic is refused", "[sync][bundle]") {
    // SHA-256 detects any change of the covered bytes (FIPS 180-4); a change in a length field shows as a
    // length that does not match the file, a change in the checksum as a mismatch.
    const std::string b = encode_bundle(sample_header(), "payload bytes here");
    for (std::size_t i = 8; i < b.size(); ++i) {
        std::string c = b;
        c[i] = static_cast<char>(c[i] ^ 0x01);
        CAPTURE(i);
        const BundleFault f = fault_of(c);
        CHECK((f == BundleFault::Corrupted || f == BundleFault::Truncated || f == BundleFault::Oversized));
    }
    std::string c = b;
    c[100] = static_cast<char>(c[100] ^ 0xff);  // inside the payload: the checksum says so
    CHECK(fault_of(c) == BundleFault::Corrupted);
}

TEST_CASE("Device names follow the documented rule", "[sync][bundle]") {
    CHECK(valid_device_name("hh-1"));
    CHECK(valid_device_name("Handheld_07.b"));
    CHECK_FALSE(valid_device_name(""));
    CHECK_FALSE(valid_device_name("-x"));
    CHECK_FALSE(valid_device_name(".x"));
    CHECK_FALSE(valid_device_name("has space"));
    CHECK_FALSE(valid_device_name("Station"));   // reserved for rows made at the station
    CHECK_FALSE(valid_device_name(std::string(33, 'a')));
    CHECK(valid_device_name(std::string(32, 'a')));
    BundleHeader h = sample_header();
    h.device = "bad name";
    CHECK_THROWS_AS(encode_bundle(h, ""), InputError);
}

TEST_CASE("The audit chain links match coreutils sha256sum, and an edit breaks the chain there", "[sync][audit]") {
    AuditEntry a{1, "2026-06-14T09:31:05Z", "import", R"({"device":"hh-1","seq":1})", kAuditGenesis, ""};
    // printf '<64 zeros>\nplotwright-audit/1\n1\n2026-06-14T09:31:05Z\nimport\n{"device":"hh-1","seq":1}\n' | sha256sum
    a.sha256 = audit_link_hash(a.prev_sha256, a);
    CHECK(a.sha256 == "be8aeb45b739db64073ee610b25cda04d7195b0c07bcc82191906308185d4137");
    AuditEntry b{2, "2026-06-14T10:00:00Z", "resolve", R"({"plot":101})", a.sha256, ""};
    b.sha256 = audit_link_hash(b.prev_sha256, b);
    CHECK(b.sha256 == "c1c07f98b3fef311c6407a82982212bac0fc6891f4558ad0215f53338667aae3");

    CHECK(verify_audit_chain({a, b}).ok());
    CHECK(verify_audit_chain({}).ok());

    SECTION("an edited detail") {
        AuditEntry edited = a;
        edited.detail = R"({"device":"hh-2","seq":1})";
        const AuditCheck c = verify_audit_chain({edited, b});
        REQUIRE_FALSE(c.ok());
        CHECK(*c.first_broken == 1);
        CHECK(c.message.find("entry 1") != std::string::npos);
    }
    SECTION("a removed first entry") {
        const AuditCheck c = verify_audit_chain({b});
        REQUIRE_FALSE(c.ok());
        CHECK(*c.first_broken == 2);
    }
    SECTION("a rehashed edit is still caught by the next link") {
        AuditEntry edited = a;
        edited.detail = R"({"device":"hh-2","seq":1})";
        edited.sha256 = audit_link_hash(edited.prev_sha256, edited);
        const AuditCheck c = verify_audit_chain({edited, b});
        REQUIRE_FALSE(c.ok());
        CHECK(*c.first_broken == 2);
    }
}

TEST_CASE("A blind trial's handheld spec names no treatment and keeps the trial", "[sync][blind]") {
    const std::string spec = R"toml(# the check is the farmers' variety
[trial]
code = "BLND26"
title = "Blind variety trial"
site = "S"
crop = "maize"
design = "rcbd"
blocks = 2
blind = true
[field]
plot_length_m = 5
plot_width_m = 3
alley_m = 1
[gradient]
bearing_deg = 0
label = "slope"
[[treatments]]
label = "Secret hybrid 1"
description = "from the breeder"
[[treatments]]
label = "Farmers variety"
check = true
[[traits]]
name = "grain_kg"
unit = "kg"
kind = "number"
)toml";
    const std::string blind = blind_spec_toml(spec, "blind.toml");
    CHECK(blind.find("Secret") == std::string::npos);
    CHECK(blind.find("breeder") == std::string::npos);
    CHECK(blind.find("Farmers") == std::string::npos);
    CHECK(blind.find("farmers") == std::string::npos);   // comments go too
    const TrialSpec s = parse_trial_spec(blind, "blind.toml");
    REQUIRE(s.treatments.size() == 2);
    CHECK(s.treatments[0].label == "T01");
    CHECK(s.treatments[1].label == "T02");
    CHECK_FALSE(s.treatments[1].check);
    CHECK(s.code == "BLND26");
    CHECK(s.blind);
    REQUIRE(s.traits.size() == 1);
    CHECK(s.traits[0].unit == "kg");

    SECTION("factor levels become codes") {
        const std::string factorial = R"toml([trial]
code = "FAC26"
title = "t"
site = "s"
crop = "c"
design = "rcbd"
blocks = 2
blind = true
extra_control = "Untreated plot"
[field]
plot_length_m = 5
plot_width_m = 3
alley_m = 1
[gradient]
bearing_deg = 0
label = "slope"
[[factors]]
name = "Nitrogen"
levels = ["N0", "N60"]
[[factors]]
name = "Variety"
levels = ["Alpha", "Beta"]
[[traits]]
name = "grain_kg"
unit = "kg"
kind = "number"
)toml";
        const std::string b = blind_spec_toml(factorial, "f.toml");
        for (const char* secret : {"Nitrogen", "Variety", "N60", "Alpha", "Beta", "Untreated"}) {
            CAPTURE(secret);
            CHECK(b.find(secret) == std::string::npos);
        }
        const TrialSpec f = parse_trial_spec(b, "f.toml");
        CHECK(f.treatments.size() == 5);   // 2 x 2 crossing plus the extra control
    }
}
