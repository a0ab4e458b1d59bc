// Fuzz target: the sync bundle reader behind `plotwright sync import`. Bundles come from handhelds over USB
// sticks and networks, so any byte string must give a bundle or a BundleError/InputError naming the file,
// never a crash or a sanitizer report. Two paths are driven:
//   1. the input as a whole file: decode_bundle (magic, lengths, checksum, header fields), then, for a
//      bundle that decodes, the payload check (SQLite's changeset reader over the payload);
//   2. the input as a payload wrapped in a well-formed bundle (a valid checksum, so the changeset reader
//      sees every input, which a random file almost never reaches).
// A decoded bundle must re-encode to the same bytes (the format has one spelling per bundle).
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>

#include "core/error.hpp"
#include "core/sync/bundle.hpp"
#include "storage/sync.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string bytes(reinterpret_cast<const char*>(data), size);
    try {
        const pw::Bundle b = pw::decode_bundle(bytes, "fuzz.bundle");
        if (pw::encode_bundle(b.header, b.payload) != bytes) std::abort();
        pw::check_bundle_payload(b, "fuzz.bundle");
    } catch (const pw::Error&) {
    }
    for (pw::BundleKind kind : {pw::BundleKind::FromDevice, pw::BundleKind::FromStation}) {
        pw::BundleHeader h;
        h.kind = kind;
        h.trial_code = "SORG26";
        h.trial_digest = "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855";
        h.device = "hh-1";
        h.seq = 1;
        h.created_utc = "2026-06-14T09:31:05Z";
        try {
            const pw::Bundle b = pw::decode_bundle(pw::encode_bundle(h, bytes), "fuzz.bundle");
            if (b.payload != bytes) std::abort();
            pw::check_bundle_payload(b, "fuzz.bundle");
        } catch (const pw::Error&) {
        }
    }
    return 0;
}
