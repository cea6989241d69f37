// Package selftest is rankplan's installation and operational qualification: built-in
// reference cases, each a quantity rankplan reports with the value that a publication, a
// standard or a general-purpose reference library gives for it, computed on the lab's own
// machine through the same functions a run uses (some run whole plans through
// runner.Prepare and runner.Execute), and judged against a stated tolerance.
//
// The cases live in the embedded file cases/cases.json (format rankplan-selftest-cases/1):
// named data sets (inline groups, an embedded NIST StRD file, or the NIST SmLs design
// rebuilt), then the cases, each with an id, what it checks, the computation and its input,
// the expected value, the tolerance and why, and the source: the reference, the committed
// test or generator that checks the same value, and where the value is frozen in a
// committed reference file, that file and the JSON Pointers to it. The package's tests hold
// every expected value to its origin, so a case never carries a number of its own.
//
// [Run] evaluates the cases and, with an output folder, writes validation.json (schema
// https://rankplan.invalid/schema/validation-v1.json), report.html and the hash-chained
// audit log with the guarantees of a run folder; `rankplan verify` recognises such a
// folder by its first record (selftest.started) and reruns the cases through
// [ResultsDigest].
package selftest
