// Package runner executes a validated plan: it loads the plan's data, makes the checks
// that need the data, runs each analysis through package stats, assembles the one
// [results.Results] value, and writes the run folder; [Verify] checks a run folder and
// reruns it.
//
// A newcomer can follow `rankplan run` in this order. [Run] is a pipeline of four steps:
// bindInputs (the plan through spec.Parse, its lock, the data through [Prepare], the work
// limits, the signing key; nothing is written when one of them fails), openRunFolder
// (folder.Create and the records of the bound inputs), execute (the computation behind
// [Execute]: every omnibus test, the decisions across analyses, the gated post-hoc
// comparisons) and closeRunFolder (results.json and the other outputs, the renderings,
// run.finished, the signature and the rename into place). Package runner/folder owns the
// run folder itself: its file names, records and their order, and the [folder.Writer]
// that writes it. DEVELOPERS.md walks through a run and a verify function by function.
package runner
