package data

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"

	"rankplan/internal/infile"
)

// fieldPos is where a field starts: its line and its byte column, both counted from 1.
// For a quoted field the column is that of the opening quote.
type fieldPos struct {
	line, col int
}

// recordReader is a byte-level RFC 4180 record parser over a bufio.Reader.
//
// It keeps the fields of the current record in one reused buffer, so reading a record
// allocates nothing once the buffers have grown to the longest record. The rules are
// those of RFC 4180 (Shafranovich 2005) as encoding/csv reads them with
// LazyQuotes = false, no comment character and no space trimming:
//
//	record  = field *(delim field)
//	field   = quoted / plain
//	quoted  = DQUOTE *(any byte except DQUOTE / DQUOTE DQUOTE) DQUOTE
//	plain   = *(any byte except delim, DQUOTE, LF)
//
// A line ends at LF; a CR immediately before the LF belongs to the line end, and so does
// a CR that is the very last byte of the input. Inside a quoted field a line end is kept
// as a single LF, whatever it was in the file. Lines with no bytes between line ends are
// skipped between records but still counted.
type recordReader struct {
	br    *bufio.Reader
	name  string // file name for messages
	delim byte

	long  []byte // holds a line longer than the bufio buffer
	lines int    // number of the last line read, from 1

	buf   []byte     // unescaped bytes of all fields of the current record
	ends  []int      // ends[i] is the end of field i in buf
	pos   []fieldPos // pos[i] is where field i starts
	start int        // line on which the current record starts

	// errField is the index of the field the last error concerns, or -1.
	errField int

	maxCell   int // the most bytes of one field, unescaped
	maxRecord int // the most bytes of one record's lines, line ends included
	recBytes  int // bytes of the current record's lines read so far
	inRecord  bool
}

// newRecordReader returns a reader of the records in br. Fields longer than maxCell
// bytes and records longer than maxRecord bytes are errors, found before more than
// maxRecord bytes are held, so that a file with no line ends (or a device that never
// ends) cannot exhaust memory.
func newRecordReader(br *bufio.Reader, name string, delim byte, maxCell, maxRecord int) *recordReader {
	return &recordReader{br: br, name: name, delim: delim, errField: -1, maxCell: maxCell, maxRecord: maxRecord}
}

// nfields is the number of fields in the current record.
func (p *recordReader) nfields() int { return len(p.ends) }

// field returns the bytes of field i of the current record. They stay valid until the
// next call to next.
func (p *recordReader) field(i int) []byte {
	s := 0
	if i > 0 {
		s = p.ends[i-1]
	}
	return p.buf[s:p.ends[i]]
}

// readLine reads one line and returns its content without the line end. nl reports
// whether the line ended with LF (false only for the last line of the input). ok is
// false at the end of the input. The content is valid until the next call.
func (p *recordReader) readLine() (content []byte, nl, ok bool, err error) {
	line, err := p.br.ReadSlice('\n')
	if errors.Is(err, bufio.ErrBufferFull) {
		p.long = append(p.long[:0], line...)
		for errors.Is(err, bufio.ErrBufferFull) {
			if p.recBytes+len(p.long) > p.maxRecord {
				return nil, false, false, p.recordTooLong(p.lines + 1)
			}
			line, err = p.br.ReadSlice('\n')
			p.long = append(p.long, line...)
		}
		line = p.long
	}
	p.recBytes += len(line)
	if p.recBytes > p.maxRecord {
		return nil, false, false, p.recordTooLong(p.lines + 1)
	}
	switch {
	case err == io.EOF:
		if len(line) == 0 {
			return nil, false, false, nil
		}
	case err != nil:
		return nil, false, false, fmt.Errorf("read %s: %w", p.displayName(), err)
	}
	p.lines++
	n := len(line)
	if n > 0 && line[n-1] == '\n' {
		nl = true
		n--
	}
	if n > 0 && line[n-1] == '\r' {
		n--
	}
	return line[:n], nl, true, nil
}

// recordTooLong is the error for a record that passes maxRecord bytes on line.
func (p *recordReader) recordTooLong(line int) error {
	msg := fmt.Sprintf("record longer than %d bytes (%s), the limit for one record of a data file", p.maxRecord, infile.Bytes(int64(p.maxRecord)))
	if p.inRecord && p.start != line {
		msg += fmt.Sprintf(" (the record starts on line %d; is a quote left open?)", p.start)
	}
	return &Error{File: p.name, Line: line, Msg: msg}
}

// cellTooLong is the error for field i, of n bytes, that starts at at.
func (p *recordReader) cellTooLong(i, n int, at fieldPos) error {
	p.errField = i
	return &Error{File: p.name, Line: at.line, Column: at.col,
		Msg: fmt.Sprintf("cell of %d bytes, more than the limit of %d bytes (%s) for one cell", n, p.maxCell, infile.Bytes(int64(p.maxCell)))}
}

func (p *recordReader) displayName() string {
	if p.name == "" {
		return "input"
	}
	return p.name
}

// next reads the next record. It returns false, nil at the end of the input.
func (p *recordReader) next() (bool, error) {
	p.errField = -1
	p.inRecord = false
	var line []byte
	var nl bool
	for {
		p.recBytes = 0
		l, hasNL, ok, err := p.readLine()
		if err != nil || !ok {
			return false, err
		}
		if len(l) > 0 {
			line, nl = l, hasNL
			break
		}
	}
	p.buf = p.buf[:0]
	p.ends = p.ends[:0]
	p.pos = p.pos[:0]
	p.start = p.lines
	p.inRecord = true
	lineNo, col := p.lines, 1
	for {
		if len(line) == 0 || line[0] != '"' {
			// Plain field: up to the next delimiter or the end of the line.
			f := line
			i := bytes.IndexByte(line, p.delim)
			if i >= 0 {
				f = line[:i]
			}
			if j := bytes.IndexByte(f, '"'); j >= 0 {
				p.errField = len(p.ends)
				return false, &Error{File: p.name, Line: lineNo, Column: col + j,
					Msg: "quote inside an unquoted field (quote the whole field and write each inner quote twice)"}
			}
			if len(f) > p.maxCell {
				return false, p.cellTooLong(len(p.ends), len(f), fieldPos{lineNo, col})
			}
			p.buf = append(p.buf, f...)
			p.ends = append(p.ends, len(p.buf))
			p.pos = append(p.pos, fieldPos{lineNo, col})
			if i < 0 {
				return true, nil
			}
			line = line[i+1:]
			col += i + 1
			continue
		}
		// Quoted field: up to a quote that is not doubled.
		at := fieldPos{lineNo, col}
		from := len(p.buf)
		line = line[1:]
		col++
		for {
			i := bytes.IndexByte(line, '"')
			if i < 0 {
				p.buf = append(p.buf, line...)
				var ok bool
				if nl {
					var err error
					line, nl, ok, err = p.readLine()
					if err != nil {
						return false, err
					}
				}
				if !ok {
					p.errField = len(p.ends)
					return false, &Error{File: p.name, Line: at.line,
						Msg: fmt.Sprintf("quoted field opened at column %d is not closed before the end of the file", at.col)}
				}
				p.buf = append(p.buf, '\n')
				lineNo, col = p.lines, 1
				continue
			}
			p.buf = append(p.buf, line[:i]...)
			line = line[i+1:]
			col += i + 1
			if len(line) > 0 && line[0] == '"' {
				p.buf = append(p.buf, '"')
				line = line[1:]
				col++
				continue
			}
			if n := len(p.buf) - from; n > p.maxCell {
				return false, p.cellTooLong(len(p.ends), n, at)
			}
			p.ends = append(p.ends, len(p.buf))
			p.pos = append(p.pos, at)
			if len(line) == 0 {
				return true, nil
			}
			if line[0] != p.delim {
				p.errField = len(p.ends) - 1
				return false, &Error{File: p.name, Line: lineNo, Column: col,
					Msg: "text after the closing quote of a quoted field (write a quote inside a quoted field twice)"}
			}
			line = line[1:]
			col++
			break
		}
	}
}
