// Sync bundles: the file a handheld hands to the station (and the station back to a handheld). A header
// naming the trial, the device and a sequence number, an opaque payload (an SQLite changeset, written and
// applied by storage/sync.cpp), and a SHA-256 checksum over everything before it.
//
// The byte format is ours and is written out in docs/sync.md ("Bundle format"); this file is its only
// reader and writer. Every integer is big-endian; every text field is length-prefixed ASCII; nothing is
// padded. A reader refuses, each with its own BundleError reason and a message naming the file:
// a file that does not start with the magic, a file shorter than its header says (truncated), a file
// longer than its header says, a checksum that does not match (corrupted), a format version it does not
// know, and header fields outside their allowed shapes. The checksum is checked before any field is
// trusted, so a flipped byte anywhere is reported as corruption, not as a strange field.
//
// Pure: no files, no clock (the creation time is an argument). SHA-256 (FIPS 180-4) by GNU Nettle.
#pragma once
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

#include "core/error.hpp"

namespace pw {

// The first 8 bytes of every bundle.
inline constexpr std::string_view kBundleMagic = "PLWTSYNC";
inline constexpr std::uint16_t kBundleFormatVersion = 1;
// Largest payload accepted (a season of a few hundred thousand observations is tens of MB).
inline constexpr std::uint64_t kBundleMaxPayload = std::uint64_t{1} << 30;

// Who made the bundle.
enum class BundleKind : std::uint8_t {
    FromDevice = 1,   // a handheld's new records, for the station
    FromStation = 2,  // plot states and added traits from the station, for one handheld
};
const char* to_string(BundleKind k);  // "device", "station"

struct BundleHeader {
    BundleKind kind = BundleKind::FromDevice;
    std::string trial_code;     // [A-Z0-9]{2,10}, as printed on the tags
    std::string trial_digest;   // the station's layout certificate, 64 lower-case hexadecimal digits
    std::string device;         // the handheld it comes from (FromDevice) or is for (FromStation)
    std::uint64_t seq = 0;      // 1, 2, ... per device and direction
    std::string created_utc;    // when it was made, ISO 8601 UTC "YYYY-MM-DDTHH:MM:SSZ"
};

struct Bundle {
    BundleHeader header;
    std::string payload;        // the SQLite changeset (may be empty: nothing new)
    std::string checksum_hex;   // the stored SHA-256, 64 lower-case hexadecimal digits
};

// Why a bundle was refused.
enum class BundleFault {
    NotABundle,   // no magic: some other file
    Truncated,    // shorter than the header says (an interrupted copy)
    Oversized,    // longer than the header says, or a payload above kBundleMaxPayload
    Corrupted,    // the checksum does not match
    Version,      // a format version this program does not know
    BadField,     // checksum right but a header field outside its shape (made by a broken writer)
};

struct BundleError : InputError {
    BundleError(BundleFault f, const std::string& message) : InputError(message), fault(f) {}
    BundleFault fault;
};

// A device name: 1 to 32 characters of A-Z a-z 0-9 . _ - , not starting with '.' or '-', and not the
// reserved name "station" (any case).
bool valid_device_name(std::string_view name);
// What valid_device_name accepts, for messages.
inline constexpr const char* kDeviceNameRule =
    "1 to 32 characters A-Z a-z 0-9 . _ - (not starting with . or -), not 'station'";

// The bundle's bytes. Throws InputError when a header field is outside its shape (a program error).
std::string encode_bundle(const BundleHeader& header, std::string_view payload);

// Reads a bundle; `source` (the file name) starts every message. Throws BundleError.
Bundle decode_bundle(std::string_view bytes, const std::string& source);

}  // namespace pw
