package audit

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sort"

	"rankplan/internal/infile"
)

// Problem is one failed check of a chain, naming the file and line.
type Problem struct {
	File string
	Line int
	Msg  string
}

// Error formats the problem as "file:line: msg".
func (p Problem) Error() string { return fmt.Sprintf("%s:%d: %s", p.File, p.Line, p.Msg) }

// Chain is a log as read by ReadChain.
type Chain struct {
	Records []Record // every line that parsed as a record, in file order
	Head    string   // Digest of the last record's canonical bytes ("" if none)
	// Torn is the number of the last line when it does not end in "\n": a write cut off
	// (by a crash or a full disk) or a tampering; 0 when the log ends cleanly.
	Torn int
}

// Limits of an audit log. The writer applies them (Log.Append refuses a record that
// would pass them) as the reader does (ReadChain refuses a log that passes them), so a
// log the tool wrote is always read whole, and a hostile file is refused before it
// fills memory.
const (
	// MaxRecordBytes is the longest line of a log, without its "\n": 16 MiB. The
	// largest records list the groups of every analysis; 1000 groups of 100-byte
	// labels take about 0.1 MiB an analysis.
	MaxRecordBytes = 16 << 20
	// MaxLogBytes is the largest log: 64 MiB.
	MaxLogBytes = 64 << 20
)

// ReadChain reads the log at path and checks it. For line n (1-based):
//
//	the line parses as a Record with no unknown fields and Schema = RecordSchema
//	line = JCS(record)                       (any edit, even of whitespace, shows)
//	seq(n) = seq(n-1) + 1, seq(1) = 1
//	prev(1) = GenesisPrev, prev(n) = Digest(JCS(record n-1))
//	time is FormatTime's fixed form; event is a dotted lowercase name; data is an object
//
// An empty file, an empty line, a line longer than MaxRecordBytes and a final line
// without "\n" (a torn write) are problems. A time earlier than the previous record's
// is a warning, not a problem: clocks can be stepped and seq is authoritative (AUDIT.md
// V8). Problems and warnings are sorted by line. The error is non-nil only when the
// file cannot be read: it is not a regular file (a symbolic link is refused, not
// followed: the log lives in a folder the tool wrote), or it has more than MaxLogBytes;
// the error then wraps an *infile.Error. ReadChain never panics, never waits on a pipe
// and never reads more than MaxLogBytes.
func ReadChain(path string) (*Chain, []Problem, []Problem, error) {
	content, err := infile.ReadFileNoFollow(path, MaxLogBytes)
	if err != nil {
		return nil, nil, nil, fmt.Errorf("read audit log %s: %w", path, err)
	}
	ch, problems, warnings := checkChain(path, content, MaxRecordBytes)
	return ch, problems, warnings, nil
}

// checkChain checks content, a log read from file, refusing lines longer than maxLine.
func checkChain(file string, content []byte, maxLine int) (*Chain, []Problem, []Problem) {
	ch := &Chain{}
	var problems, warnings []Problem
	add := func(line int, format string, args ...any) {
		problems = append(problems, Problem{File: file, Line: line, Msg: fmt.Sprintf(format, args...)})
	}
	if len(content) == 0 {
		add(1, "empty log: no records")
		return ch, problems, warnings
	}
	var (
		lastSeq  int64  // seq of the previous parsed record (0 before any)
		lastHash string // digest of the previous record's canonical bytes
		linked   = true // the previous line parsed, so prev and seq can be checked
		lastTime string
	)
	lineNo := 0
	for len(content) > 0 {
		lineNo++
		var line []byte
		i := bytes.IndexByte(content, '\n')
		if i < 0 {
			line, content = content, nil
			ch.Torn = lineNo
			add(lineNo, "torn write: last line does not end in a newline")
		} else {
			line, content = content[:i], content[i+1:]
		}
		if len(line) == 0 {
			add(lineNo, "empty line")
			linked = false
			continue
		}
		if len(line) > maxLine {
			add(lineNo, "line of %d bytes, more than the limit of %d bytes (%s) for one record", len(line), maxLine, infile.Bytes(int64(maxLine)))
			linked = false
			continue
		}
		rec, err := decodeRecord(line)
		if err != nil {
			add(lineNo, "not a record: %v", err)
			linked = false
			continue
		}
		canon, err := Canonical(rec)
		if err != nil {
			add(lineNo, "record cannot be canonicalised: %v", err)
			linked = false
			continue
		}
		if !bytes.Equal(canon, line) {
			add(lineNo, "line is not in canonical form (edited, or not written by this tool)")
		}
		if rec.Schema != RecordSchema {
			add(lineNo, "unknown schema %q (want %q)", rec.Schema, RecordSchema)
		}
		if linked {
			want := lastSeq + 1
			switch {
			case rec.Seq == want:
			case rec.Seq <= lastSeq:
				add(lineNo, "seq %d repeats or goes back (previous record has seq %d)", rec.Seq, lastSeq)
			default:
				add(lineNo, "seq gap: expected %d, found %d", want, rec.Seq)
			}
			wantPrev := lastHash
			if lastSeq == 0 && lastHash == "" {
				wantPrev = GenesisPrev
			}
			if rec.Prev != wantPrev {
				if wantPrev == GenesisPrev {
					add(lineNo, "prev of the first record is %q, want the genesis value", rec.Prev)
				} else {
					add(lineNo, "prev does not match the digest of line %d (want %s, found %q)", lineNo-1, wantPrev, rec.Prev)
				}
			}
		} else if !isDigest(rec.Prev) {
			add(lineNo, "prev %q is not a sha256 digest", rec.Prev)
		}
		if _, ok := parseTime(rec.Time); !ok {
			add(lineNo, "time %q is not UTC RFC 3339 with 9 fractional digits", rec.Time)
		} else {
			if lastTime != "" && rec.Time < lastTime {
				warnings = append(warnings, Problem{File: file, Line: lineNo,
					Msg: fmt.Sprintf("time %s is earlier than the previous record's %s (seq is authoritative)", rec.Time, lastTime)})
			}
			lastTime = rec.Time
		}
		if !validEvent(rec.Event) {
			add(lineNo, "bad event name %q", rec.Event)
		}
		if len(rec.Data) == 0 || rec.Data[0] != '{' {
			add(lineNo, "data is not a JSON object")
		}
		ch.Records = append(ch.Records, rec)
		lastSeq = rec.Seq
		lastHash = Digest(canon)
		ch.Head = lastHash
		linked = true
	}
	sort.SliceStable(problems, func(i, j int) bool { return problems[i].Line < problems[j].Line })
	sort.SliceStable(warnings, func(i, j int) bool { return warnings[i].Line < warnings[j].Line })
	return ch, problems, warnings
}

// decodeRecord parses one line strictly: no unknown fields, nothing after
// the object.
func decodeRecord(line []byte) (Record, error) {
	var rec Record
	dec := json.NewDecoder(bytes.NewReader(line))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&rec); err != nil {
		return Record{}, err
	}
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return Record{}, errors.New("data after the record")
	}
	return rec, nil
}
