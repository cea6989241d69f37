// Package data loads the data file of a plan: one CSV file in long format, one row per
// observation, from which it takes a group column and one or more numeric outcome
// columns, and hashes the file's bytes while reading them.
//
// # Format
//
// Records follow RFC 4180 (Y. Shafranovich, "Common Format and MIME Type for
// Comma-Separated Values (CSV) Files", 2005), read the way encoding/csv reads them
// with LazyQuotes false: quoted fields, "" for a quote inside a quoted field, quoted
// fields spanning lines, LF or CRLF line ends. The delimiter is ',', ';' or tab, the
// decimal separator '.' or ','. A UTF-8 byte order mark before the header is skipped.
//
//	group;minutes
//	"a";12,5
//	b;NA
//
// # Cost
//
// The loader is built for files of 10^7 rows: it streams through a fixed read buffer
// with its own byte-level parser, reuses one buffer for the fields of the current
// record, converts numbers without allocating, and stores the result column-wise, so
// the work per row is linear in its bytes and allocates nothing.
package data
