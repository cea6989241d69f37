package data

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"slices"
	"sync"
)

// Reading in chunks. A file of parallelMinBytes or more is read by one goroutine, which
// hashes every byte (the SHA-256 is one sequential stream) and cuts the text after the
// header into chunks of about chunkBytes that end at a record boundary; workers parse the
// chunks at the same time; the calling goroutine joins their rows in file order. The
// table is the one the sequential reader builds, value for value, and so is the first
// error: every chunk knows its first line, and the two kinds of error that depend on the
// rows before a chunk (the limit on rows, the limit on distinct labels) are decided while
// the chunks are joined, by position (see loader.join).
const (
	parallelMinBytes = 4 << 20
	chunkBytes       = 1 << 20
	maxWorkers       = 8
)

// lastRecordEnd returns the length of the longest prefix of b that ends with a line end
// outside quotes, 0 when there is none. b must start outside quotes, as a record does.
//
// Quotes are counted, not parsed: in RFC 4180 text every quote either opens or closes a
// quoted field or is half of a doubled quote inside one, so a line end lies outside
// quotes exactly when an even number of quotes precede it. In text that breaks the rules
// (a quote inside an unquoted field) the count may cut a chunk inside a record after
// that quote, but the parser of the chunk that holds the quote reports it first, and the
// first error in file order is the one returned.
func lastRecordEnd(b []byte) int {
	end, i := 0, 0
	for i < len(b) {
		// Outside quotes: the last line end before the next quote ends a record.
		q := bytes.IndexByte(b[i:], '"')
		seg := b[i:]
		if q >= 0 {
			seg = b[i : i+q]
		}
		if j := bytes.LastIndexByte(seg, '\n'); j >= 0 {
			end = i + j + 1
		}
		if q < 0 {
			break
		}
		// Inside quotes: skip to the closing quote.
		i += q + 1
		q = bytes.IndexByte(b[i:], '"')
		if q < 0 {
			break
		}
		i += q + 1
	}
	return end
}

// chunkJob is one chunk of text on its way through the workers, with the loader that
// parses it; both are reused for later chunks.
type chunkJob struct {
	buf  []byte // the chunk's text
	line int    // the line on which buf starts
	// cut marks a chunk that ends where no record ended: its text holds a record longer
	// than the limit, whose parse must fail.
	cut  bool
	l    *loader
	src  bytes.Reader
	err  error
	done chan struct{}
}

// newChunkJob returns a job whose loader reads rows with the header of l. Its limit on
// rows is lifted: that limit counts the rows of every chunk before, and join applies it.
func (l *loader) newChunkJob() *chunkJob {
	j := &chunkJob{done: make(chan struct{}, 1)}
	lim := l.lim
	lim.Rows = math.MaxInt
	br := bufio.NewReaderSize(&j.src, min(bufSize, max(l.chunkBytes, 16)))
	cl := &loader{opt: l.opt, lim: lim, p: newRecordReader(br, l.opt.Name, l.opt.Delimiter, lim.CellBytes, lim.RecordBytes),
		names: l.names, groupAt: l.groupAt, outAt: l.outAt, labAt: l.labAt, ids: map[string]int32{},
		expect: -1, track: true}
	cl.labIDs = make([]map[string]int32, len(l.labAt))
	for c := range cl.labIDs {
		cl.labIDs[c] = map[string]int32{}
	}
	cl.labFirst = make([][]firstSeen, len(l.labAt))
	cl.t.Outcome = make([][]float64, len(l.outAt))
	cl.t.Labels = make([]LabelColumn, len(l.labAt))
	j.l = cl
	return j
}

// parse reads the rows of the job's chunk, starting afresh.
func (j *chunkJob) parse() error {
	cl := j.l
	t := &cl.t
	t.Rows, t.HighPrecisionCells = 0, 0
	t.Groups, t.Group, t.Line = t.Groups[:0], t.Group[:0], t.Line[:0]
	for c := range t.Outcome {
		t.Outcome[c] = t.Outcome[c][:0]
	}
	for c := range t.Labels {
		t.Labels[c].Values, t.Labels[c].Row = t.Labels[c].Values[:0], t.Labels[c].Row[:0]
		clear(cl.labIDs[c])
		cl.labFirst[c] = cl.labFirst[c][:0]
	}
	clear(cl.ids)
	cl.groupFirst = cl.groupFirst[:0]
	cl.lastID, cl.lastLabel = -1, ""
	j.src.Reset(j.buf)
	cl.p.br.Reset(&j.src)
	cl.p.lines = j.line - 1
	if err := cl.rows(); err != nil {
		return err
	}
	if j.cut {
		return fmt.Errorf("read %s: a chunk of %d bytes without a record boundary parsed without error", cl.p.displayName(), len(j.buf))
	}
	return nil
}

// runChunked reads the rows after the header (the rest of l.br, from line l.p.lines+1)
// in chunks (see parallelMinBytes) and joins them into l.t.
func (l *loader) runChunked() error {
	inflight := l.workers + 2
	stop := make(chan struct{})
	jobs := make(chan *chunkJob)
	order := make(chan *chunkJob, inflight)
	free := make(chan *chunkJob, inflight)
	for range inflight {
		free <- l.newChunkJob()
	}
	var wg sync.WaitGroup
	for range l.workers {
		wg.Go(func() {
			for j := range jobs {
				j.err = j.parse()
				j.done <- struct{}{}
			}
		})
	}
	var readErr error
	wg.Go(func() {
		readErr = l.produce(stop, jobs, order, free)
		close(jobs)
		close(order)
	})
	var err error
	for j := range order {
		<-j.done
		if err == nil {
			if err = l.join(j); err != nil {
				close(stop)
			}
		}
		free <- j
	}
	wg.Wait()
	if err == nil && readErr != nil {
		err = fmt.Errorf("read %s: %w", l.p.displayName(), readErr)
	}
	return err
}

// produce reads the text after the header from l.br, cuts it into chunks that end at a
// record boundary and hands each to the workers (jobs) and, in file order, to the joiner
// (order). It returns a read error, and nothing once stop is closed.
func (l *loader) produce(stop <-chan struct{}, jobs, order, free chan *chunkJob) error {
	var carry []byte // the text after the last chunk's end, read but not yet handed on
	line := l.p.lines + 1
	for eof := false; !eof; {
		var j *chunkJob
		select {
		case j = <-free:
		case <-stop:
			return nil
		}
		target := len(carry) + l.chunkBytes
		j.buf = append(slices.Grow(j.buf[:0], target), carry...)
		// Reads of at most bufSize bytes, as the sequential reader makes, so that a
		// cancelled context stops the reading as soon.
		for len(j.buf) < target {
			n, err := l.br.Read(j.buf[len(j.buf):min(target, len(j.buf)+bufSize)])
			j.buf = j.buf[:len(j.buf)+n]
			if err == io.EOF {
				eof = true
				break
			}
			if err != nil {
				return err
			}
		}
		end := len(j.buf)
		j.cut = false
		if !eof {
			end = lastRecordEnd(j.buf)
			if end == 0 {
				if len(j.buf) <= l.lim.RecordBytes {
					// One record so far, within its limit: read on.
					carry = append(carry[:0], j.buf...)
					free <- j // never blocks: free has room for every job
					continue
				}
				end, j.cut = len(j.buf), true
			}
		}
		carry = append(carry[:0], j.buf[end:]...)
		j.buf, j.line = j.buf[:end], line
		line += bytes.Count(j.buf, []byte{'\n'})
		if len(j.buf) == 0 {
			free <- j
			continue
		}
		select {
		case jobs <- j:
		case <-stop:
			return nil
		}
		order <- j // never blocks: order holds as many jobs as there are
	}
	return nil
}

// join appends the rows of job j, the next chunk in file order, to l.t, numbering its
// labels in l's order of first appearance, or returns the first error in file order
// among: j's own error, the row after the limit on rows, and the first label past the
// limit on distinct labels of the group column or of a label column.
func (l *loader) join(j *chunkJob) error {
	cl := j.l
	ct := &cl.t
	// The earliest problem so far, by row of the chunk and stage within the row.
	bestRow, bestStage, best := math.MaxInt, math.MaxInt, error(nil)
	consider := func(row, stage int, err error) {
		if row < bestRow || row == bestRow && stage < bestStage {
			bestRow, bestStage, best = row, stage, err
		}
	}
	if j.err != nil {
		consider(ct.Rows, cl.stage, j.err)
	}
	// The limit on rows: the chunk's row rr is row lim.Rows + 1 of the file.
	if rr := l.lim.Rows - l.t.Rows; rr < ct.Rows {
		consider(rr, stageRows, l.tooManyRows(int(ct.Line[rr])))
	} else if j.err != nil && rr == ct.Rows && cl.stage > stageRecord {
		consider(rr, stageRows, l.tooManyRows(cl.p.start))
	}
	// Labels: the chunk's labels in its order of first appearance are the file's new
	// labels in its order of first appearance.
	remap := make([]int32, len(ct.Groups))
	for li, name := range ct.Groups {
		id, ok := l.ids[name]
		if !ok {
			if len(l.t.Groups) == l.lim.Labels {
				f := cl.groupFirst[li]
				consider(f.row, stageGroup, l.labelsError(l.groupAt, f.pos))
				break
			}
			id = int32(len(l.t.Groups))
			l.t.Groups = append(l.t.Groups, name)
			l.ids[name] = id
		}
		remap[li] = id
	}
	labRemap := make([][]int32, len(ct.Labels))
	for c := range ct.Labels {
		col := &l.t.Labels[c]
		labRemap[c] = make([]int32, len(ct.Labels[c].Values))
		for li, v := range ct.Labels[c].Values {
			id, ok := l.labIDs[c][v]
			if !ok {
				if len(col.Values) == l.lim.Labels {
					f := cl.labFirst[c][li]
					consider(f.row, stageLabels+c, l.labelsError(l.labAt[c], f.pos))
					break
				}
				id = int32(len(col.Values))
				col.Values = append(col.Values, v)
				l.labIDs[c][v] = id
			}
			labRemap[c][li] = id
		}
	}
	if best != nil {
		return best
	}
	if l.t.Rows == 0 && ct.Rows > 0 {
		l.presizeFrom(ct.Rows, len(j.buf))
	}
	for _, g := range ct.Group {
		if g >= 0 {
			g = remap[g]
		}
		l.t.Group = append(l.t.Group, g)
	}
	for c := range ct.Outcome {
		l.t.Outcome[c] = append(l.t.Outcome[c], ct.Outcome[c]...)
	}
	for c := range ct.Labels {
		for _, id := range ct.Labels[c].Row {
			l.t.Labels[c].Row = append(l.t.Labels[c].Row, labRemap[c][id])
		}
	}
	l.t.Line = append(l.t.Line, ct.Line...)
	l.t.Rows += ct.Rows
	l.t.HighPrecisionCells += ct.HighPrecisionCells
	return nil
}

// labelsError is the error for a cell at pos in field i that holds one distinct label more
// than the limit.
func (l *loader) labelsError(i int, pos fieldPos) error {
	return &Error{File: l.opt.Name, Line: pos.line, Column: pos.col, Field: l.names[i], Msg: l.tooManyLabels()}
}

// presizeFrom sizes the table's columns for the whole input from the first chunk: rows
// rows in n bytes (see presize).
func (l *loader) presizeFrom(rows, n int) {
	if l.expect <= 0 || n <= 0 {
		return
	}
	est := float64(rows) * float64(l.expect) / float64(n) * 1.05
	est = min(est, float64(l.expect)/float64(len(l.names))+1, math.MaxInt32)
	l.grow(int(est) - l.t.Rows)
}
