// Sync bundle writer and reader (bundle.hpp; byte layout in docs/sync.md, "Bundle format").
//
//   offset  size  field
//   0       8     magic "PLWTSYNC"
//   8       2     format version (1)
//   10      1     kind: 1 from a device, 2 from the station
//   11      1     c = length of the trial code (2..10)
//   12      c     trial code, ASCII
//   ..      32    trial digest: the station's layout certificate, SHA-256 as 32 raw bytes
//   ..      1     d = length of the device name (1..32)
//   ..      d     device name, ASCII
//   ..      8     sequence number (>= 1)
//   ..      1     u = length of the creation time (20..24)
//   ..      u     creation time, ISO 8601 UTC
//   ..      8     p = payload length (<= 2^30)
//   ..      p     payload: an SQLite changeset
//   ..      32    SHA-256 (FIPS 180-4) of every byte before it
// Integers big-endian (network order, RFC 1700 convention).
#include "core/sync/bundle.hpp"

#include <nettle/sha2.h>

#include <array>

#include <fmt/format.h>

namespace pw {
namespace {

constexpr std::size_t kDigestSize = SHA256_DIGEST_SIZE;  // 32

std::array<std::uint8_t, kDigestSize> sha256(std::string_view bytes) {
    sha256_ctx ctx;
    sha256_init(&ctx);
    sha256_update(&ctx, bytes.size(), reinterpret_cast<const std::uint8_t*>(bytes.data()));
    std::array<std::uint8_t, kDigestSize> out{};
    sha256_digest(&ctx, kDigestSize, out.data());
    return out;
}

std::string hex(std::string_view raw) {
    static constexpr char kHex[] = "0123456789abcdef";
    std::string s;
    s.reserve(raw.size() * 2);
    for (unsigned char b : raw) {
        s += kHex[b >> 4];
        s += kHex[b & 0x0f];
    }
    return s;
}

bool is_hex64(std::string_view s) {
    if (s.size() != 64) return false;
    for (char c : s)
        if (!((c >= '0' && c <= '9') || (c >= 'a' && c <= 'f'))) return false;
    return true;
}

std::string unhex(std::string_view s) {
    auto nibble = [](char c) { return c <= '9' ? c - '0' : c - 'a' + 10; };
    std::string raw;
    for (std::size_t i = 0; i + 1 < s.size(); i += 2) raw += static_cast<char>(nibble(s[i]) * 16 + nibble(s[i + 1]));
    return raw;
}

bool valid_code(std::string_view s) {
    if (s.size() < 2 || s.size() > 10) return false;
    for (char c : s)
        if (!((c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9'))) return false;
    return true;
}

// "YYYY-MM-DDTHH:MM:SS" then optional ".fff" and "Z": the shape the store's UTC columns accept.
bool valid_utc(std::string_view s) {
    if (s.size() < 20 || s.size() > 24 || s.back() != 'Z') return false;
    static constexpr std::string_view kShape = "dddd-dd-ddTdd:dd:dd";
    for (std::size_t i = 0; i < kShape.size(); ++i) {
        const char c = s[i];
        if (kShape[i] == 'd' ? !(c >= '0' && c <= '9') : c != kShape[i]) return false;
    }
    for (std::size_t i = kShape.size(); i + 1 < s.size(); ++i)
        if (!(s[i] == '.' && i == kShape.size()) && !(s[i] >= '0' && s[i] <= '9')) return false;
    return true;
}

void put_u(std::string& out, std::uint64_t v, int bytes) {
    for (int i = bytes - 1; i >= 0; --i) out += static_cast<char>((v >> (8 * i)) & 0xff);
}

void put_text(std::string& out, std::string_view s) {
    put_u(out, s.size(), 1);
    out += s;
}

// Reads fields in order; running past the end means the file was cut short.
class Reader {
public:
    Reader(std::string_view bytes, const std::string& source) : b_(bytes), source_(source) {}

    std::uint64_t u(int bytes, const char* field) {
        need(static_cast<std::size_t>(bytes), field);
        std::uint64_t v = 0;
        for (int i = 0; i < bytes; ++i) v = (v << 8) | static_cast<unsigned char>(b_[pos_++]);
        return v;
    }
    std::string_view raw(std::size_t n, const char* field) {
        need(n, field);
        std::string_view s = b_.substr(pos_, n);
        pos_ += n;
        return s;
    }
    std::string_view text(const char* field) {
        const auto n = static_cast<std::size_t>(u(1, field));
        return raw(n, field);
    }
    std::size_t pos() const { return pos_; }

private:
    void need(std::size_t n, const char* field) {
        if (b_.size() - pos_ < n)
            throw BundleError(BundleFault::Truncated,
                              fmt::format("{}: truncated sync bundle: the file ends after {} bytes, inside the {} "
                                          "(was the copy interrupted? export it again on the device)",
                                          source_, b_.size(), field));
    }
    std::string_view b_;
    const std::string& source_;
    std::size_t pos_ = 0;
};

}  // namespace

const char* to_string(BundleKind k) { return k == BundleKind::FromStation ? "station" : "device"; }

bool valid_device_name(std::string_view name) {
    if (name.empty() || name.size() > 32 || name[0] == '.' || name[0] == '-') return false;
    for (char c : name)
        if (!((c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '.' || c == '_' ||
              c == '-'))
            return false;
    std::string lower;
    for (char c : name) lower += static_cast<char>(c >= 'A' && c <= 'Z' ? c - 'A' + 'a' : c);
    return lower != "station";
}

std::string encode_bundle(const BundleHeader& h, std::string_view payload) {
    if (!valid_code(h.trial_code)) throw InputError("bundle header: trial code '" + h.trial_code + "' is not [A-Z0-9]{2,10}");
    if (!is_hex64(h.trial_digest))
        throw InputError("bundle header: trial digest '" + h.trial_digest + "' is not 64 lower-case hexadecimal digits");
    if (!valid_device_name(h.device))
        throw InputError("bundle header: device name '" + h.device + "' is not " + kDeviceNameRule);
    if (h.seq < 1) throw InputError("bundle header: the sequence number starts at 1");
    if (!valid_utc(h.created_utc)) throw InputError("bundle header: creation time '" + h.created_utc + "' is not ISO 8601 UTC");
    if (h.kind != BundleKind::FromDevice && h.kind != BundleKind::FromStation)
        throw InputError("bundle header: unknown bundle kind");
    if (payload.size() > kBundleMaxPayload)
        throw InputError(fmt::format("bundle payload of {} bytes exceeds the limit of {}", payload.size(), kBundleMaxPayload));

    std::string out;
    out.reserve(128 + payload.size());
    out += kBundleMagic;
    put_u(out, kBundleFormatVersion, 2);
    put_u(out, static_cast<std::uint8_t>(h.kind), 1);
    put_text(out, h.trial_code);
    out += unhex(h.trial_digest);
    put_text(out, h.device);
    put_u(out, h.seq, 8);
    put_text(out, h.created_utc);
    put_u(out, payload.size(), 8);
    out += payload;
    const auto sum = sha256(out);
    out.append(reinterpret_cast<const char*>(sum.data()), sum.size());
    return out;
}

Bundle decode_bundle(std::string_view bytes, const std::string& source) {
    if (bytes.size() < kBundleMagic.size() || bytes.substr(0, kBundleMagic.size()) != kBundleMagic)
        throw BundleError(BundleFault::NotABundle,
                          fmt::format("{}: not a plotwright sync bundle (it does not begin with \"{}\")", source,
                                      kBundleMagic));
    Reader r(bytes, source);
    r.raw(kBundleMagic.size(), "magic");
    const auto version = r.u(2, "format version");
    const auto kind = r.u(1, "bundle kind");
    const std::string_view code = r.text("trial code");
    const std::string_view digest = r.raw(kDigestSize, "trial digest");
    const std::string_view device = r.text("device name");
    const std::uint64_t seq = r.u(8, "sequence number");
    const std::string_view created = r.text("creation time");
    const std::uint64_t length = r.u(8, "payload length");
    if (length > kBundleMaxPayload)
        throw BundleError(BundleFault::Oversized,
                          fmt::format("{}: corrupted sync bundle: its header declares a payload of {} bytes, more than "
                                      "any bundle holds ({} at most)",
                                      source, length, kBundleMaxPayload));
    const std::size_t expected = r.pos() + static_cast<std::size_t>(length) + kDigestSize;
    if (bytes.size() < expected)
        throw BundleError(BundleFault::Truncated,
                          fmt::format("{}: truncated sync bundle: its header declares {} bytes in all, the file has "
                                      "only {} (was the copy interrupted? export it again on the device)",
                                      source, expected, bytes.size()));
    if (bytes.size() > expected)
        throw BundleError(BundleFault::Oversized,
                          fmt::format("{}: corrupted sync bundle: its header declares {} bytes in all, the file has {} "
                                      "({} bytes too many)",
                                      source, expected, bytes.size(), bytes.size() - expected));
    const std::string_view payload = r.raw(static_cast<std::size_t>(length), "payload");
    const std::string_view stored = r.raw(kDigestSize, "checksum");
    const auto computed = sha256(bytes.substr(0, expected - kDigestSize));
    const std::string_view computed_view(reinterpret_cast<const char*>(computed.data()), computed.size());
    if (stored != computed_view)
        throw BundleError(BundleFault::Corrupted,
                          fmt::format("{}: corrupted sync bundle: checksum mismatch (stored SHA-256 {}, computed {}); "
                                      "the file was damaged after it was written: nothing from it is used",
                                      source, hex(stored), hex(computed_view)));
    if (version != kBundleFormatVersion)
        throw BundleError(BundleFault::Version,
                          fmt::format("{}: sync bundle format version {} is not understood by this program (it reads "
                                      "version {}); import it with a newer plotwright",
                                      source, version, kBundleFormatVersion));

    auto bad = [&](const std::string& what) {
        throw BundleError(BundleFault::BadField, fmt::format("{}: malformed sync bundle header: {}", source, what));
    };
    Bundle b;
    if (kind != 1 && kind != 2) bad(fmt::format("kind {} (expected 1, from a device, or 2, from the station)", kind));
    b.header.kind = static_cast<BundleKind>(kind);
    b.header.trial_code = std::string(code);
    if (!valid_code(code)) bad("trial code '" + b.header.trial_code + "' is not [A-Z0-9]{2,10}");
    b.header.trial_digest = hex(digest);
    b.header.device = std::string(device);
    if (!valid_device_name(device)) bad("device name '" + b.header.device + "' is not " + kDeviceNameRule);
    if (seq < 1) bad("sequence number 0 (they start at 1)");
    b.header.seq = seq;
    b.header.created_utc = std::string(created);
    if (!valid_utc(created)) bad("creation time '" + b.header.created_utc + "' is not ISO 8601 UTC");
    b.payload = std::string(payload);
    b.checksum_hex = hex(stored);
    return b;
}

}  // namespace pw
