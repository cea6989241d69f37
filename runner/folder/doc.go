// Package folder owns the contract of a run folder: which files it holds, which audit
// records its log carries in which order, what each record holds, and the code that both
// writes and reads a folder. A run (rankplan run) and a qualification record (rankplan
// selftest --out) are the two kinds of folder; each is described by a [Kind].
//
// Every record's data is a typed value of this package ([RunStarted], [PlanBound], ...),
// and every record as a whole matches the audit-record JSON Schema embedded in package
// schemas (draft 2020-12). [Writer] writes a folder with the guarantees the audit trail
// needs (records canonical and hash-chained, synced at the points that later steps rely
// on; files through synced temporary files, on disk before their records; the folder
// renamed into place only when complete on disk, never replacing anything); [Read] reads one back, checking the chain and validating every record.
//
// A run folder's log reads, in this order:
//
//	run.started          the build that ran (after the plan and data were validated)
//	plan.bound           the plan: path, raw and canonical SHA-256, lock and deviations
//	data.bound           the data file: path, size, SHA-256, rows
//	exclusions.applied   per analysis, the rows left out and why
//	analysis.finished    one per analysis: status, p-value method, random stream
//	output.written       one per file: results.json first (with its results digest)
//	run.finished         or run.failed, which ends a run that stopped
//
// and the folder holds audit.jsonl, audit.head (the head of the finished log),
// results.json, plan.yaml, provenance.intoto.json, report.html, summary.md, pairs.csv,
// and, when given, lock.json and signature.json.
package folder
