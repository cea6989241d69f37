package data

import (
	"errors"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Error is a data error with its position in the file. Its text reads
//
//	NAME:LINE:COL: column "minutes": cannot read "12.5x" as a number
//
// with the parts that do not apply left out: NAME:LINE: message for an error that
// concerns a whole record (a wrong number of fields, a quoted field left open at the
// end of the file), and NAME: message for an error that concerns the whole file. A
// zero-length File drops the NAME part.
//
// Line and Column count from 1, and Column counts bytes, as encoding/csv's ParseError
// does; a UTF-8 byte order mark at the start of the file is not counted. For an error
// about a field's value, Column is where the field starts (for a quoted field, its
// opening quote). For a quoting error, Column is the offending byte: the stray quote,
// or the first byte after a closing quote.
type Error struct {
	File   string // file name as given in Options.Name
	Line   int    // line number, from 1; 0 when the error concerns the whole file
	Column int    // byte column, from 1; 0 when not applicable
	Field  string // column name from the header; "" when not applicable
	Msg    string // the message, complete without Err
	Err    error  // optional underlying cause, returned by Unwrap
}

// Error returns the positioned message described on [Error].
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		if e.File != "" {
			b.WriteByte(':')
		}
		b.WriteString(strconv.Itoa(e.Line))
		if e.Column > 0 {
			b.WriteByte(':')
			b.WriteString(strconv.Itoa(e.Column))
		}
	}
	if b.Len() > 0 {
		b.WriteString(": ")
	}
	if e.Field != "" {
		b.WriteString("column ")
		b.WriteString(strconv.Quote(e.Field))
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// Unwrap returns the underlying cause, or nil.
func (e *Error) Unwrap() error { return e.Err }

// ErrNoRows is the cause of the [*Error] for a file that holds a header and no data
// rows, so that a caller can tell such a file (a layout without data yet) from others.
var ErrNoRows = errors.New("no data rows")

// maxShown is the longest cell text, in bytes, that a message shows in full.
const maxShown = 64

// quoteCell returns the cell text quoted for a message. A text longer than maxShown
// bytes is cut at a rune boundary, and its length is given after the quoted part.
func quoteCell(b []byte) string {
	if len(b) <= maxShown {
		return strconv.Quote(string(b))
	}
	n := maxShown
	for n > 0 && !utf8.RuneStart(b[n]) {
		n--
	}
	return strconv.Quote(string(b[:n])) + "... (" + strconv.Itoa(len(b)) + " bytes)"
}
