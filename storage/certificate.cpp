// The stored layout certificate (certificate.hpp): table layout_certificate, one row per trial database,
// written with the trial and fixed afterwards by triggers (storage/schema.cpp, docs/schema.md). A database
// made before certificates were stored has no row: verify then relies on re-deriving the layout alone.
#include "storage/certificate.hpp"

#include "core/design/certificate.hpp"
#include "storage/sqlite_statement.hpp"
#include "storage/store.hpp"

namespace pw {

std::optional<StoredCertificate> stored_certificate(const Store& store) {
    sql::Statement st(store.handle(), "SELECT format, sha256 FROM layout_certificate WHERE id = 1");
    if (!st.step()) return std::nullopt;
    return StoredCertificate{st.text(0), st.text(1)};
}

void insert_certificate(sqlite3* db, const TrialSpec& spec, const Layout& layout) {
    sql::Statement st(db, "INSERT INTO layout_certificate (id, format, sha256) VALUES (1, ?1, ?2)");
    st.bind(1, kCertificateFormat).bind(2, layout_digest(spec, layout));
    st.run();
}

}  // namespace pw
