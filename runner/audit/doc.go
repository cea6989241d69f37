// Package audit writes and checks the tamper-evident audit trail of a run:
// RFC 8785 canonical JSON, a SHA-256 hash-chained append-only log of
// records, detached Ed25519 signatures over a log head, and plan locks
// (preregistration).
//
// Every record is one line of canonical JSON. Record n carries
//
//	prev(n) = "sha256:" + hex(SHA-256(JCS(record n-1)))    (prev(1) = GenesisPrev)
//
// so any edit, insertion or deletion before the head breaks a link; this is
// the hash-chain construction of secure logging (Crosby and Wallach, USENIX
// Security 2009, §2). A chain alone cannot show a deleted tail: the head must
// be anchored outside the log (a signed head, see Sign, or a stored digest).
//
// Canonical bytes follow RFC 8785 (Rundgren, Jordan and Erdtman, 2020). Times
// are UTC RFC 3339 (Klyne and Newman, 2002) with nine fixed fractional digits
// so that they sort as strings. Signatures are Ed25519 (RFC 8032, Josefsson
// and Liusvaara, 2017) over a domain-separated message.
package audit
