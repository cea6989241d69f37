// Package spec defines rankplan's analysis plan: its Go types, how a YAML plan file is
// read and validated, and the positioned errors that point a user at the exact line,
// column and key of every mistake.
//
// # Reading a plan
//
// [Load] and [Parse] go through four steps, each of which reports every problem it finds
// before the next step runs:
//
//  1. YAML is parsed into a node tree (gopkg.in/yaml.v3), and the tree is converted to a
//     JSON-compatible value by this package, not by the YAML library: keys must be strings
//     and unique, numbers finite, unquoted dates and custom tags are refused, anchors and
//     aliases are refused. Each value keeps the line and column it came from.
//  2. The value is validated against the embedded JSON Schema (package schemas).
//  3. The value is decoded into [Plan], rejecting unknown keys a second time.
//  4. Meaning is checked in Go: identifiers unique, options that go together present,
//     features of later releases refused as "not implemented yet".
//
// Checks that need the data (columns exist, groups present) are made by package runner,
// which reports them through the same [Error] type using [Plan.Pos].
package spec
