// Package runner executes a validated plan: it loads the plan's data, makes the checks
// that need the data, runs each analysis through package stats, assembles the one
// [results.Results] value, and writes the run folder.
//
// A newcomer can follow `rankplan run` in this order: [Prepare] (data → analysis inputs),
// [Execute] (analysis inputs → results), [Run] (the whole run, results → run folder).
package runner
