package audit

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"sync"
	"time"

	"rankplan/internal/infile"
)

// timeLayout is RFC 3339 in UTC with nine fixed fractional digits.
const timeLayout = "2006-01-02T15:04:05.000000000Z"

// Record is one line of the audit log.
type Record struct {
	Schema string          `json:"schema"` // RecordSchema
	Seq    int64           `json:"seq"`    // 1, 2, ... without gaps
	Prev   string          `json:"prev"`   // Digest(canonical bytes of the previous record); GenesisPrev for seq 1
	Time   string          `json:"time"`   // FormatTime of the tool's clock
	Event  string          `json:"event"`  // e.g. run.started, plan.bound, data.bound, run.finished, run.failed
	Actor  Actor           `json:"actor"`
	Data   json.RawMessage `json:"data"` // the event's content (a JSON object)
}

// FormatTime formats t in UTC as RFC 3339 with exactly nine fractional
// digits, so that for years 0000–9999 every result has the same width and
// string order equals time order (RFC 3339 §5.1):
//
//	YYYY-MM-DDThh:mm:ss.nnnnnnnnnZ
//
// time.RFC3339Nano drops trailing zeros and does not sort (golang/go#19635).
func FormatTime(t time.Time) string {
	return t.UTC().Format(timeLayout)
}

// parseTime accepts exactly the form FormatTime writes.
func parseTime(s string) (time.Time, bool) {
	t, err := time.Parse(timeLayout, s)
	if err != nil || FormatTime(t) != s {
		return time.Time{}, false
	}
	return t, true
}

// Log is an append-only audit log file. Each record is written with one write(2) as its
// canonical (JCS) bytes plus "\n" before Append returns, so another process (or a
// verify of a killed run) sees every record appended so far; the file is opened
// O_WRONLY|O_CREATE|O_EXCL|O_APPEND, so an existing file is never reused or truncated
// (21 CFR Part 11 §11.10(e): changes never obscure earlier records). A Log is safe for
// concurrent use.
//
// Durability is the caller's choice of commit points: [Log.Sync] (and [Log.Close]) make
// every record written so far durable with one fsync(2). A record that no later step
// depends on needs no sync of its own: what the process wrote survives the process being
// killed, and a power loss before the next commit point can only cost the log its last
// records, leaving a log that ends early (or with a torn last line), which is what a
// stopped run leaves anyway. The writer of a folder syncs before every step that relies
// on the log being on disk (see package runner/folder).
type Log struct {
	mu     sync.Mutex
	f      *os.File
	path   string
	actor  Actor
	now    func() time.Time
	seq    int64
	head   string
	size   int64 // bytes of the complete records written
	synced int64 // bytes known to be on disk (size at the last successful sync)
	broken error // set when a write or sync failed; later appends refuse
}

// Create creates a new log at path (never an existing file). Every record
// carries actor and a time from now (time.Now when nil).
func Create(path string, actor Actor, now func() time.Time) (*Log, error) {
	if now == nil {
		now = time.Now
	}
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL|os.O_APPEND, FileMode)
	if err != nil {
		return nil, fmt.Errorf("create audit log: %w", err)
	}
	return &Log{f: f, path: path, actor: actor, now: now}, nil
}

// Append writes the next record, with event and data (marshalled to a JSON
// object), and returns the record written. It does not sync the file: see [Log.Sync].
//
//	seq = previous seq + 1,  prev = Head() (GenesisPrev for the first)
func (l *Log) Append(event string, data any) (Record, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.f == nil {
		return Record{}, errors.New("append audit record: log is closed")
	}
	if l.broken != nil {
		return Record{}, fmt.Errorf("append audit record: earlier write failed: %w", l.broken)
	}
	if !validEvent(event) {
		return Record{}, fmt.Errorf("append audit record: bad event name %q", event)
	}
	body, err := Canonical(data)
	if err != nil {
		return Record{}, fmt.Errorf("append audit record %s: data: %w", event, err)
	}
	if len(body) == 0 || body[0] != '{' {
		return Record{}, fmt.Errorf("append audit record %s: data is not a JSON object", event)
	}
	prev := l.head
	if l.seq == 0 {
		prev = GenesisPrev
	}
	rec := Record{
		Schema: RecordSchema,
		Seq:    l.seq + 1,
		Prev:   prev,
		Time:   FormatTime(l.now()),
		Event:  event,
		Actor:  l.actor,
		Data:   json.RawMessage(body),
	}
	line, err := Canonical(rec)
	if err != nil {
		return Record{}, fmt.Errorf("append audit record %s: %w", event, err)
	}
	if len(line) > MaxRecordBytes {
		return Record{}, fmt.Errorf("append audit record %s: the record has %d bytes, more than the limit of %d bytes (%s) for one record",
			event, len(line), MaxRecordBytes, infile.Bytes(MaxRecordBytes))
	}
	if l.size+int64(len(line))+1 > MaxLogBytes {
		return Record{}, fmt.Errorf("append audit record %s: the log would pass its limit of %d bytes (%s)", event, MaxLogBytes, infile.Bytes(MaxLogBytes))
	}
	head := Digest(line)
	line = append(line, '\n')
	// A write that fails (a full disk) may leave part of the line in the file: cut the
	// file back to its last complete record, which a full disk allows, so that the log
	// ends cleanly where the run stopped.
	if _, err := l.f.Write(line); err != nil {
		l.broken = err
		l.f.Truncate(l.size)
		return Record{}, fmt.Errorf("append audit record %s to %s: %w", event, l.path, err)
	}
	l.size += int64(len(line))
	l.seq = rec.Seq
	l.head = head
	return rec, nil
}

// Head returns the digest of the last record's canonical bytes ("" before
// the first record).
func (l *Log) Head() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.head
}

// Seq returns the seq of the last record written (0 before the first).
func (l *Log) Seq() int64 {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.seq
}

// Sync makes every record written so far durable (fsync(2)); it does nothing when no
// record was written since the last sync. A failed sync breaks the log: later appends
// refuse, since what reached the disk is no longer known.
func (l *Log) Sync() error {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.f == nil {
		return errors.New("sync audit log: log is closed")
	}
	return l.syncLocked()
}

func (l *Log) syncLocked() error {
	if l.broken != nil {
		return fmt.Errorf("sync audit log %s: earlier write failed: %w", l.path, l.broken)
	}
	if l.synced == l.size {
		return nil
	}
	if err := l.f.Sync(); err != nil {
		l.broken = err
		return fmt.Errorf("sync audit log %s: %w", l.path, err)
	}
	l.synced = l.size
	return nil
}

// Close syncs (as [Log.Sync]) and closes the file. Closing twice is an error.
func (l *Log) Close() error {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.f == nil {
		return errors.New("close audit log: already closed")
	}
	var serr error
	if l.broken == nil {
		serr = l.syncLocked()
	}
	f := l.f
	l.f = nil
	if err := f.Close(); err != nil && serr == nil {
		serr = fmt.Errorf("close audit log %s: %w", l.path, err)
	}
	if serr != nil {
		return fmt.Errorf("close audit log: %w", serr)
	}
	return nil
}

// validEvent accepts dotted lowercase names such as "run.started":
//
//	event = word *("." word),  word = [a-z] *[a-z0-9_]
func validEvent(s string) bool {
	if s == "" || len(s) > 128 {
		return false
	}
	start := true
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c >= 'a' && c <= 'z':
			start = false
		case (c >= '0' && c <= '9' || c == '_') && !start:
		case c == '.' && !start:
			start = true
		default:
			return false
		}
	}
	return !start
}
