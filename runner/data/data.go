package data

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"os"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"
	"unsafe"

	"rankplan/internal/infile"
)

// Options says how to read a data file and which columns to take from it. There are
// no defaults: every field that has a list of legal values must hold one of them.
type Options struct {
	// Name is the file name shown in messages, as the user wrote it
	// (e.g. "examples/x/data.csv"). LoadFile uses the path when Name is "".
	Name string
	// Delimiter separates fields: ',', ';' or '\t'.
	Delimiter byte
	// Decimal is the decimal separator of numeric cells: '.' or ','. With ',' the
	// delimiter must not be ','.
	Decimal byte
	// GroupColumn is the header name of the column holding the group labels.
	GroupColumn string
	// OutcomeColumns are the header names of one or more distinct numeric columns,
	// none of them GroupColumn.
	OutcomeColumns []string
	// MissingTokens are the cell texts that mean "missing", matched exactly against the
	// cell text with leading and trailing ASCII spaces removed, e.g. "" and "NA". A
	// token that itself starts or ends with a space could never match and is an error.
	MissingTokens []string
	// FailOnMissing makes a missing cell in a required column an error. When false, a
	// missing group cell is kept as group -1 and a missing outcome cell as NaN, for the
	// caller to exclude and count.
	FailOnMissing bool
	// LabelColumns are the header names of text columns read as labels (e.g. a site
	// column that selects a subset of rows), none of them GroupColumn or an outcome
	// column. Their cells are kept exactly as written: missing-value tokens do not apply.
	LabelColumns []string
	// Limits sets the limits on what a file may hold; a zero field means the package's
	// limit of the same name (MaxRows, MaxCellBytes, MaxRecordBytes, MaxLabels).
	Limits Limits
}

// Limits bound what a data file may hold, so that a mistaken or hostile file is refused
// with its position before it exhausts memory or time. Every limit is checked while the
// file is read; a zero field means the package's limit of the same name.
type Limits struct {
	Rows        int // data rows (the header and blank lines not counted)
	CellBytes   int // bytes of one field, after unquoting
	RecordBytes int // bytes of one record: its line, or its lines when a quoted field spans line ends
	Labels      int // distinct values in the group column, and in each label column
}

// The limits of a data file. A file of MaxRows rows is twice the 10^7 rows the loader is
// benchmarked on; MaxLabels leaves room for a group column with many more labels than
// the groups an analysis takes (package runner allows 1000), while it bounds the memory
// the labels take to MaxLabels × MaxCellBytes (160 MiB).
const (
	MaxFileBytes   = 4 << 30    // the data file's size: 4 GiB, checked before reading (LoadFile)
	MaxRows        = 20_000_000 // data rows
	MaxCellBytes   = 16 << 10   // one cell: 16 KiB
	MaxRecordBytes = 1 << 20    // one record: 1 MiB
	MaxLabels      = 10_000     // distinct labels in the group column or a label column
)

// resolve returns the limits in force: each field of l when it is positive, else the
// package's limit. Labels are numbered in an int32, which bounds them too.
func (l Limits) resolve() Limits {
	pick := func(v, limit int) int {
		if v > 0 {
			return min(v, math.MaxInt32)
		}
		return limit
	}
	return Limits{Rows: pick(l.Rows, MaxRows), CellBytes: pick(l.CellBytes, MaxCellBytes),
		RecordBytes: pick(l.RecordBytes, MaxRecordBytes), Labels: pick(l.Labels, MaxLabels)}
}

// Table is the loaded data, column-wise: row i is Group[i], Outcome[c][i], Line[i].
type Table struct {
	// Rows is the number of data rows (the header and blank lines are not counted).
	Rows int
	// SHA256 is the SHA-256 digest of the file's raw bytes, BOM included.
	SHA256 [32]byte
	// Size is the file's length in bytes.
	Size int64
	// Groups are the distinct group labels in order of first appearance, exactly as
	// written in the file (not trimmed).
	Groups []string
	// Group holds, per row, the index of the row's label in Groups, or -1 if the group
	// cell is missing.
	Group []int32
	// Outcome holds, per outcome column in the order of Options.OutcomeColumns, the
	// value of each row; NaN means the cell was missing.
	Outcome [][]float64
	// Line holds, per row, the line on which the row's record starts.
	Line []int32
	// HighPrecisionCells counts the numeric cells with more than 15 significant digits
	// (leading zeros not significant, trailing zeros significant). Distinct decimals
	// with that many digits may convert to the same float64 and then count as ties.
	HighPrecisionCells int
	// Labels holds, per label column in the order of Options.LabelColumns, the distinct
	// cell texts and each row's index into them.
	Labels []LabelColumn
}

// LabelColumn is a text column read as labels.
type LabelColumn struct {
	// Values are the distinct cell texts in order of first appearance, as written.
	Values []string
	// Row holds, per row, the index of the row's cell text in Values.
	Row []int32
}

// bufSize is the size of the read buffer. Lines longer than this are still read,
// through a second buffer.
const bufSize = 64 << 10

// load reads the CSV text of r as [LoadFile] describes; size is the expected number of
// bytes of r, or -1 if unknown, and only sizes the table's slices once the first rows
// show the bytes per row.
func load(ctx context.Context, r io.Reader, opt Options, size int64) (*Table, error) {
	chunk, workers := 0, 0
	if size >= parallelMinBytes {
		chunk, workers = chunkBytes, min(runtime.GOMAXPROCS(0), maxWorkers)
	}
	return loadIn(ctx, r, opt, size, chunk, workers)
}

// loadIn is [load]; with chunk > 0 the rows after the header are read in chunks of about
// chunk bytes, parsed by workers goroutines (see loader.runChunked), else one by one.
func loadIn(ctx context.Context, r io.Reader, opt Options, size int64, chunk, workers int) (*Table, error) {
	if err := opt.check(); err != nil {
		return nil, err
	}
	hr := &hashReader{r: infile.ContextReader(ctx, r), h: sha256.New()}
	br := bufio.NewReaderSize(hr, bufSize)
	if err := skipBOM(br, opt.Name); err != nil {
		return nil, err
	}
	lim := opt.Limits.resolve()
	l := &loader{opt: opt, lim: lim, p: newRecordReader(br, opt.Name, opt.Delimiter, lim.CellBytes, lim.RecordBytes),
		ids: map[string]int32{}, hr: hr, br: br, expect: size}
	l.chunkBytes, l.workers = chunk, max(workers, 1)
	t, err := l.run()
	if err != nil {
		return nil, err
	}
	t.Size = hr.n
	hr.h.Sum(t.SHA256[:0])
	return t, nil
}

// LoadFile reads the CSV data file at path, in long format: a header record, then one
// record per observation. Options.Name (default: path) names the file in errors. Only a
// regular file (after following symbolic links) of at most [MaxFileBytes] is read: a
// named pipe, a device or a directory is refused before anything is read from it (see
// [Open]). It reads the file exactly once, to its end, hashing the bytes as they pass:
//
//	SHA256 = SHA-256(every byte of the file)       (NIST FIPS 180-4, 2015)
//	Size   = number of bytes of the file
//
// Records follow RFC 4180 (Shafranovich 2005): quoted fields, "" for a quote inside a
// quoted field, quoted fields spanning lines, LF or CRLF line ends, and an optional
// UTF-8 byte order mark before the header. A line end inside a quoted field is read as
// LF whether the file has LF or CRLF, as encoding/csv does. The header is the first
// record that is not a blank line, and every later record must have as many fields.
// Blank lines are skipped but counted in line numbers.
//
// A numeric cell, after removing leading and trailing ASCII spaces, must be in plain
// decimal notation, with sep the Decimal byte:
//
//	number   = [sign] mantissa [("e" / "E") [sign] digits]
//	mantissa = digits [sep digits] / sep digits
//	sign     = "+" / "-"
//
// so "inf", "nan", hex floats, digit or thousands separators, "1." and, when Decimal
// is ',', the '.' are all rejected. It is converted to the nearest float64 (IEEE 754
// round to nearest even, by strconv.ParseFloat). A value beyond the float64 range, or
// a non-zero value so small that it would become zero, is an error; "-0" is read as
// negative zero. Missing cells follow Options.MissingTokens and Options.FailOnMissing.
// Group labels must be valid UTF-8.
//
// Every data error is an *Error; a failing read is returned wrapped. LoadFile
// allocates nothing per row: group labels are allocated once each (once per chunk when
// read in chunks), and the columns are sized once from the first rows and the file's
// size.
//
// A file of 4 MiB or more is parsed in chunks of about 1 MiB on as many goroutines as
// GOMAXPROCS allows (at most 8), while one goroutine reads and hashes it; the table and
// the first error (its text and position) are the same as when it is read record by
// record (see chunked.go).
//
// ctx is checked before every read, that is every 64 KiB: once ctx is done, LoadFile
// returns its error (wrapped) within a buffer of rows.
func LoadFile(ctx context.Context, path string, opt Options) (*Table, error) {
	if opt.Name == "" {
		opt.Name = path
	}
	f, size, err := Open(path, opt.Name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return load(ctx, f, opt, size)
}

// Open opens the data file at path for reading when it is a regular file (after
// following symbolic links) of at most [MaxFileBytes], and returns it with its size; it
// never waits on a named pipe. A refusal is an [*Error] about the file named name,
// whose message starts "cannot open the data file: ".
func Open(path, name string) (*os.File, int64, error) {
	f, size, err := infile.Open(path, MaxFileBytes)
	if err != nil {
		return nil, 0, &Error{File: name, Msg: "cannot open the data file: " + err.Error(), Err: err}
	}
	return f, size, nil
}

// Header reads only the header record from r (the first record that is not a blank
// line, after an optional UTF-8 byte order mark) and returns its cells. Only
// Options.Name, Options.Delimiter and Options.Limits are used. It stops after the header, having read
// ahead by at most one buffer of bytes, and hashes nothing.
func Header(r io.Reader, opt Options) ([]string, error) {
	if err := checkDelimiter(opt.Delimiter); err != nil {
		return nil, err
	}
	br := bufio.NewReader(r)
	if err := skipBOM(br, opt.Name); err != nil {
		return nil, err
	}
	lim := opt.Limits.resolve()
	p := newRecordReader(br, opt.Name, opt.Delimiter, lim.CellBytes, lim.RecordBytes)
	ok, err := p.next()
	if err != nil {
		return nil, err
	}
	if !ok {
		return nil, &Error{File: opt.Name, Msg: "empty file"}
	}
	h := make([]string, p.nfields())
	for i := range h {
		h[i] = string(p.field(i))
	}
	return h, nil
}

// hashReader passes reads through, hashing and counting the bytes.
type hashReader struct {
	r io.Reader
	h hash.Hash
	n int64
}

func (h *hashReader) Read(b []byte) (int, error) {
	n, err := h.r.Read(b)
	h.h.Write(b[:n]) // hash.Hash.Write never returns an error
	h.n += int64(n)
	return n, err
}

// bom is the UTF-8 encoding of U+FEFF.
var bom = []byte{0xEF, 0xBB, 0xBF}

// skipBOM discards a UTF-8 byte order mark at the start of br.
func skipBOM(br *bufio.Reader, name string) error {
	b, err := br.Peek(len(bom))
	if err != nil && err != io.EOF {
		if name == "" {
			name = "input"
		}
		return fmt.Errorf("read %s: %w", name, err)
	}
	if bytes.Equal(b, bom) {
		_, _ = br.Discard(len(bom)) // cannot fail: the bytes are buffered
	}
	return nil
}

func checkDelimiter(d byte) error {
	switch d {
	case ',', ';', '\t':
		return nil
	}
	return fmt.Errorf("data options: delimiter %q is not one of ',', ';' or '\\t'", rune(d))
}

// check validates the options.
func (o *Options) check() error {
	if err := checkDelimiter(o.Delimiter); err != nil {
		return err
	}
	switch o.Decimal {
	case '.':
	case ',':
		if o.Delimiter == ',' {
			return errors.New("data options: decimal separator ',' needs a delimiter other than ','")
		}
	default:
		return fmt.Errorf("data options: decimal separator %q is not '.' or ','", rune(o.Decimal))
	}
	if o.GroupColumn == "" {
		return errors.New("data options: no group column")
	}
	if len(o.OutcomeColumns) == 0 {
		return errors.New("data options: no outcome column")
	}
	for i, c := range o.OutcomeColumns {
		if c == "" {
			return fmt.Errorf("data options: outcome column %d has an empty name", i+1)
		}
		if c == o.GroupColumn {
			return fmt.Errorf("data options: column %q is both the group column and an outcome column", c)
		}
		for _, d := range o.OutcomeColumns[:i] {
			if d == c {
				return fmt.Errorf("data options: outcome column %q is listed twice", c)
			}
		}
	}
	for i, c := range o.LabelColumns {
		if c == "" {
			return fmt.Errorf("data options: label column %d has an empty name", i+1)
		}
		if c == o.GroupColumn || slices.Contains(o.OutcomeColumns, c) {
			return fmt.Errorf("data options: column %q is a label column and the group column or an outcome column", c)
		}
		if slices.Contains(o.LabelColumns[:i], c) {
			return fmt.Errorf("data options: label column %q is listed twice", c)
		}
	}
	for _, m := range o.MissingTokens {
		if m != strings.Trim(m, " ") {
			return fmt.Errorf("data options: missing-value token %q starts or ends with a space, so no trimmed cell can match it", m)
		}
	}
	return nil
}

// loader holds the state of one load.
type loader struct {
	opt Options
	lim Limits // the limits in force
	p   *recordReader
	t   Table

	names   []string // the header cells
	groupAt int      // field index of the group column
	outAt   []int    // field index of each outcome column
	labAt   []int    // field index of each label column
	labIDs  []map[string]int32

	ids       map[string]int32 // group label to index in t.Groups
	lastLabel string           // the label of the previous row, a cheap first check
	lastID    int32            // and its index, or -1 if there is none yet

	scratch []byte // a numeric cell rewritten with '.' as the decimal separator

	hr     *hashReader   // the bytes read so far, for sizing
	br     *bufio.Reader // the bytes read but not yet parsed
	expect int64         // expected bytes of the whole input, or -1

	// chunkBytes > 0 reads the rows after the header in chunks of about that many bytes,
	// parsed on workers goroutines (see runChunked).
	chunkBytes, workers int

	// For a loader of one chunk: where each new label was first seen (track), and the
	// stage of the row being read when an error occurred (see stage*).
	track      bool
	groupFirst []firstSeen
	labFirst   [][]firstSeen
	stage      int
}

// The stages of reading one row, in the order the checks are made: a record-level
// problem (the record itself, its field count, its line number), the limit on rows,
// the group cell, the outcome cells, then label column c at stageLabels + c. Errors of
// one row are reported in this order, so the first in file order is the one of the
// lowest (row, stage).
const (
	stageRecord = iota
	stageRows
	stageGroup
	stageOutcome
	stageLabels
)

// firstSeen is where a label was first seen in a chunk: its row within the chunk and
// its cell.
type firstSeen struct {
	row int
	pos fieldPos
}

// sizeAfterRows is the number of rows after which the loader estimates the number of
// rows of the whole file and sizes its slices once.
const sizeAfterRows = 1024

// presize grows the table's slices to the number of rows expected from the bytes per
// row so far, plus 5%, so that a large file's columns are not copied at each doubling.
// It never expects more rows than the file could hold (each record takes at least one
// byte per field) or than a Line can number.
func (l *loader) presize() {
	if l.expect <= 0 {
		return
	}
	used := l.hr.n - int64(l.br.Buffered())
	if used <= 0 {
		return
	}
	est := float64(l.t.Rows) * float64(l.expect) / float64(used) * 1.05
	est = min(est, float64(l.expect)/float64(len(l.names))+1, math.MaxInt32)
	l.grow(int(est) - l.t.Rows)
}

// grow makes room in the table's columns for more rows.
func (l *loader) grow(more int) {
	if more <= 0 {
		return
	}
	l.t.Group = slices.Grow(l.t.Group, more)
	l.t.Line = slices.Grow(l.t.Line, more)
	for c := range l.t.Outcome {
		l.t.Outcome[c] = slices.Grow(l.t.Outcome[c], more)
	}
	for c := range l.t.Labels {
		l.t.Labels[c].Row = slices.Grow(l.t.Labels[c].Row, more)
	}
}

func (l *loader) run() (*Table, error) {
	p := l.p
	ok, err := p.next()
	if err != nil {
		return nil, err
	}
	if !ok {
		return nil, &Error{File: l.opt.Name, Msg: "empty file"}
	}
	if err := l.header(); err != nil {
		return nil, err
	}
	l.lastID = -1
	l.t.Outcome = make([][]float64, len(l.outAt))
	if l.chunkBytes > 0 {
		err = l.runChunked()
	} else {
		err = l.rows()
	}
	if err != nil {
		return nil, err
	}
	if l.t.Rows == 0 {
		return nil, &Error{File: l.opt.Name, Msg: "no data rows", Err: ErrNoRows}
	}
	return &l.t, nil
}

// rows reads the records after the header one by one, to the end of the input.
func (l *loader) rows() error {
	p := l.p
	for {
		l.stage = stageRecord
		ok, err := p.next()
		if err != nil {
			var e *Error
			if errors.As(err, &e) && p.errField >= 0 && p.errField < len(l.names) {
				e.Field = l.names[p.errField]
			}
			return err
		}
		if !ok {
			return nil
		}
		if err := l.row(); err != nil {
			return err
		}
	}
}

// header takes the current record as the header and finds the required columns.
func (l *loader) header() error {
	p := l.p
	l.names = make([]string, p.nfields())
	for i := range l.names {
		l.names[i] = string(p.field(i))
	}
	find := func(name string) (int, error) {
		at := -1
		for i, h := range l.names {
			if h != name {
				continue
			}
			if at >= 0 {
				return 0, &Error{File: l.opt.Name, Line: p.start,
					Msg: fmt.Sprintf("column %q appears more than once in the header (columns %d and %d)", name, at+1, i+1)}
			}
			at = i
		}
		if at < 0 {
			return 0, &Error{File: l.opt.Name, Line: p.start,
				Msg: fmt.Sprintf("no column %q in the header (columns: %s)", name, strings.Join(l.names, ", "))}
		}
		return at, nil
	}
	var err error
	if l.groupAt, err = find(l.opt.GroupColumn); err != nil {
		return err
	}
	l.outAt = make([]int, len(l.opt.OutcomeColumns))
	for c, name := range l.opt.OutcomeColumns {
		if l.outAt[c], err = find(name); err != nil {
			return err
		}
	}
	l.labAt = make([]int, len(l.opt.LabelColumns))
	l.labIDs = make([]map[string]int32, len(l.opt.LabelColumns))
	l.t.Labels = make([]LabelColumn, len(l.opt.LabelColumns))
	for c, name := range l.opt.LabelColumns {
		if l.labAt[c], err = find(name); err != nil {
			return err
		}
		l.labIDs[c] = map[string]int32{}
	}
	return nil
}

// row appends the current record to the table.
func (l *loader) row() error {
	p := l.p
	l.stage = stageRecord
	if p.nfields() != len(l.names) {
		return &Error{File: l.opt.Name, Line: p.start,
			Msg: fmt.Sprintf("record has %d fields, header has %d", p.nfields(), len(l.names))}
	}
	if p.start > math.MaxInt32 {
		return &Error{File: l.opt.Name, Line: p.start, Msg: "more lines than this loader can number (2147483647)"}
	}
	l.stage = stageRows
	if l.t.Rows == l.lim.Rows {
		return l.tooManyRows(p.start)
	}
	l.stage = stageGroup
	g, err := l.group(l.groupAt)
	if err != nil {
		return err
	}
	l.stage = stageOutcome
	for c, at := range l.outAt {
		v, err := l.value(at)
		if err != nil {
			return err
		}
		l.t.Outcome[c] = append(l.t.Outcome[c], v)
	}
	for c, at := range l.labAt {
		l.stage = stageLabels + c
		id, err := l.label(c, at)
		if err != nil {
			return err
		}
		l.t.Labels[c].Row = append(l.t.Labels[c].Row, id)
	}
	l.t.Group = append(l.t.Group, g)
	l.t.Line = append(l.t.Line, int32(p.start))
	l.t.Rows++
	if l.t.Rows == sizeAfterRows {
		l.presize()
	}
	return nil
}

// tooManyRows is the error for the row after the limit, on line.
func (l *loader) tooManyRows(line int) error {
	return &Error{File: l.opt.Name, Line: line,
		Msg: fmt.Sprintf("more than %d data rows, the limit for a data file", l.lim.Rows)}
}

// cellError returns an *Error about field i of the current record.
func (l *loader) cellError(i int, msg string, cause error) error {
	at := l.p.pos[i]
	return &Error{File: l.opt.Name, Line: at.line, Column: at.col, Field: l.names[i], Msg: msg, Err: cause}
}

// missing reports whether the trimmed cell text b is a missing-value token.
func (l *loader) missing(b []byte) bool {
	for _, m := range l.opt.MissingTokens {
		if string(b) == m {
			return true
		}
	}
	return false
}

// group returns the group index of field i of the current record, adding a new label
// to the table's Groups.
func (l *loader) group(i int) (int32, error) {
	b := l.p.field(i)
	if l.lastID >= 0 && string(b) == l.lastLabel {
		return l.lastID, nil
	}
	if t := trimSpaces(b); l.missing(t) {
		if l.opt.FailOnMissing {
			return 0, l.cellError(i, "missing value "+quoteCell(t), nil)
		}
		return -1, nil
	}
	id, ok := l.ids[string(b)]
	if !ok {
		if !utf8.Valid(b) {
			return 0, l.cellError(i, "group label "+quoteCell(b)+" is not valid UTF-8", nil)
		}
		if len(l.t.Groups) == l.lim.Labels {
			return 0, l.cellError(i, l.tooManyLabels(), nil)
		}
		s := string(b)
		id = int32(len(l.t.Groups))
		l.t.Groups = append(l.t.Groups, s)
		l.ids[s] = id
		if l.track {
			l.groupFirst = append(l.groupFirst, firstSeen{l.t.Rows, l.p.pos[i]})
		}
	}
	l.lastLabel, l.lastID = l.t.Groups[id], id
	return id, nil
}

func (l *loader) tooManyLabels() string {
	return fmt.Sprintf("more than %d distinct labels, the limit for a group or subset column (this cell holds label %d)", l.lim.Labels, l.lim.Labels+1)
}

// label returns the index of field i of the current record among the values of label
// column c, adding a new value. The map lookup with a []byte key converted in place does
// not allocate; only a new distinct value does.
func (l *loader) label(c, i int) (int32, error) {
	b := l.p.field(i)
	col := &l.t.Labels[c]
	id, ok := l.labIDs[c][string(b)]
	if ok {
		return id, nil
	}
	if !utf8.Valid(b) {
		return 0, l.cellError(i, "label "+quoteCell(b)+" is not valid UTF-8", nil)
	}
	if len(col.Values) == l.lim.Labels {
		return 0, l.cellError(i, l.tooManyLabels(), nil)
	}
	s := string(b)
	id = int32(len(col.Values))
	col.Values = append(col.Values, s)
	l.labIDs[c][s] = id
	if l.track {
		l.labFirst[c] = append(l.labFirst[c], firstSeen{l.t.Rows, l.p.pos[i]})
	}
	return id, nil
}

// value returns the number in field i of the current record, or NaN if it is missing.
func (l *loader) value(i int) (float64, error) {
	b := l.p.field(i)
	t := trimSpaces(b)
	if l.missing(t) {
		if l.opt.FailOnMissing {
			return 0, l.cellError(i, "missing value "+quoteCell(t), nil)
		}
		return math.NaN(), nil
	}
	sig, ok := scanDecimal(t, l.opt.Decimal)
	if !ok {
		return 0, l.cellError(i, "cannot read "+quoteCell(b)+" as a number", strconv.ErrSyntax)
	}
	if sig > maxExactDigits {
		l.t.HighPrecisionCells++
	}
	if l.opt.Decimal != '.' {
		l.scratch = append(l.scratch[:0], t...)
		if j := bytes.IndexByte(l.scratch, l.opt.Decimal); j >= 0 {
			l.scratch[j] = '.'
		}
		t = l.scratch
	}
	// The view is only read by ParseFloat, which copies the text into any error it
	// returns, so no string is allocated on the way.
	v, err := strconv.ParseFloat(unsafe.String(unsafe.SliceData(t), len(t)), 64)
	switch {
	case errors.Is(err, strconv.ErrRange) || (err == nil && v == 0 && sig > 0):
		return 0, l.cellError(i, "value "+quoteCell(b)+" is out of range", strconv.ErrRange)
	case err != nil:
		return 0, l.cellError(i, "cannot read "+quoteCell(b)+" as a number", err)
	}
	return v, nil
}
