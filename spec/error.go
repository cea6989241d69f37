package spec

import (
	"cmp"
	"errors"
	"slices"
	"strconv"
	"strings"
)

// Error is one problem in a plan file, at a position. Its text reads
//
//	plan.yaml:12:5: analyses[0].pvalue.method: expected one of "asymptotic", "exact"
//
// Line and Column count from 1 (Column counts characters, as yaml.v3 does). Path is the
// dotted key path of the value ("(top level)" for the document itself).
type Error struct {
	File   string
	Line   int
	Column int
	Path   string
	Msg    string
	Err    error // the underlying cause, if any (e.g. fs.ErrNotExist); not shown in the text
}

// Unwrap returns the underlying cause, or nil.
func (e *Error) Unwrap() error { return e.Err }

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		b.WriteString(":" + strconv.Itoa(e.Line) + ":" + strconv.Itoa(max(e.Column, 1)))
	}
	b.WriteString(": ")
	if e.Path != "" {
		b.WriteString(e.Path + ": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// ErrorList is every problem found in one pass over a plan, sorted by position.
// It is returned as an error by [Load], [Parse] and the checks in package runner.
type ErrorList []*Error

func (l ErrorList) Error() string {
	parts := make([]string, len(l))
	for i, e := range l {
		parts[i] = e.Error()
	}
	return strings.Join(parts, "\n")
}

// Unwrap returns the errors of the list, so that errors.Is and errors.As see each one.
func (l ErrorList) Unwrap() []error {
	out := make([]error, len(l))
	for i, e := range l {
		out[i] = e
	}
	return out
}

// Sort orders the list by line, column, key path and message, and drops exact repeats.
func (l *ErrorList) Sort() {
	slices.SortStableFunc(*l, func(a, b *Error) int {
		return cmp.Or(cmp.Compare(a.Line, b.Line), cmp.Compare(a.Column, b.Column),
			cmp.Compare(a.Path, b.Path), cmp.Compare(a.Msg, b.Msg))
	})
	*l = slices.CompactFunc(*l, func(a, b *Error) bool {
		return a.Line == b.Line && a.Column == b.Column && a.Path == b.Path && a.Msg == b.Msg && a.File == b.File
	})
}

// Err returns the sorted list as an error, or nil when it is empty.
func (l ErrorList) Err() error {
	if len(l) == 0 {
		return nil
	}
	l.Sort()
	return l
}

// AsList returns the plan errors inside err, if any.
func AsList(err error) (ErrorList, bool) {
	var l ErrorList
	if errors.As(err, &l) {
		return l, true
	}
	var e *Error
	if errors.As(err, &e) {
		return ErrorList{e}, true
	}
	return nil, false
}
