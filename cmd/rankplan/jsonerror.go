package main

import (
	"errors"
	"io"

	"github.com/spf13/cobra"

	"rankplan/runner/data"
	"rankplan/spec"
)

// errorReport is what a command given --json prints on standard output when it fails
// before printing anything there: one JSON object, so that a program reading standard
// output always gets JSON. Standard error keeps the lines for people.
type errorReport struct {
	Error errorBody `json:"error"`
}

type errorBody struct {
	Message  string         `json:"message"`   // the whole text printed on standard error, without the prefix
	ExitCode int            `json:"exit_code"` // the exit code of the command
	Problems []errorProblem `json:"problems"`  // each positioned problem of a plan or data file; empty otherwise
}

// errorProblem is one positioned problem: a plan error (field is the key path) or a data
// error (field is the column name). Line and column count from 1; 0 (left out) when the
// problem concerns the whole file.
type errorProblem struct {
	File    string `json:"file"`
	Line    int    `json:"line,omitempty"`
	Column  int    `json:"column,omitempty"`
	Field   string `json:"field,omitempty"`
	Message string `json:"message"`
}

// newErrorReport describes err, which ends the command with exit code code.
func newErrorReport(err error, code int) errorReport {
	b := errorBody{Message: err.Error(), ExitCode: code, Problems: []errorProblem{}}
	var de *data.Error
	if l, ok := spec.AsList(err); ok {
		for _, e := range l {
			b.Problems = append(b.Problems, errorProblem{File: e.File, Line: e.Line, Column: e.Column, Field: e.Path, Message: e.Msg})
		}
	} else if errors.As(err, &de) {
		b.Problems = append(b.Problems, errorProblem{File: de.File, Line: de.Line, Column: de.Column, Field: de.Field, Message: de.Msg})
	}
	return errorReport{Error: b}
}

// wantsJSON reports whether cmd was given --json.
func wantsJSON(cmd *cobra.Command) bool {
	if cmd == nil {
		return false
	}
	f := cmd.Flags().Lookup("json")
	return f != nil && f.Value.String() == "true"
}

// countingWriter passes writes on to w and counts the bytes written.
type countingWriter struct {
	w io.Writer
	n int64
}

func (c *countingWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.n += int64(n)
	return n, err
}
