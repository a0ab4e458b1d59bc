// The layout certificate as stored with the trial: the SHA-256 of the layout's canonical text
// (core/design/certificate.hpp, docs/certificate.md), written in the same transaction that creates the trial
// and never changed afterwards (table layout_certificate, docs/schema.md).
#pragma once
#include <optional>
#include <string>

#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"

struct sqlite3;

namespace pw {

class Store;

struct StoredCertificate {
    std::string format;   // kCertificateFormat of the program that designed the trial
    std::string sha256;   // 64 lower-case hexadecimal digits
};

// The certificate stored with the trial; nothing for a trial designed before certificates were stored.
std::optional<StoredCertificate> stored_certificate(const Store& store);

// Storage-internal: computes the certificate of `layout` and inserts it, inside the caller's transaction.
void insert_certificate(sqlite3* db, const TrialSpec& spec, const Layout& layout);

}  // namespace pw
