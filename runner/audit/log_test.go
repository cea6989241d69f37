package audit

import (
	"bytes"
	"encoding/json"
	"errors"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
	"time"
)

// fixedClock returns a clock that starts at t0 and steps by one
// millisecond and 7 ns per call.
func fixedClock(t0 time.Time) func() time.Time {
	n := 0
	return func() time.Time {
		n++
		return t0.Add(time.Duration(n) * (time.Millisecond + 7))
	}
}

var testActor = Actor{User: "tester", Host: "host.invalid", Signer: "A. Tester", Reason: "unit test"}

// writeLog writes a log of n records and returns its path and lines.
func writeLog(t testing.TB, n int) (string, [][]byte) {
	t.Helper()
	p := filepath.Join(t.TempDir(), "audit.jsonl")
	l, err := Create(p, testActor, fixedClock(time.Date(2026, 12, 1, 20, 12, 32, 0, time.UTC)))
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < n; i++ {
		if _, err := l.Append("run.step", map[string]any{"i": i, "note": "<b>&"}); err != nil {
			t.Fatal(err)
		}
	}
	if err := l.Close(); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	lines := bytes.SplitAfter(b, []byte("\n"))
	return p, lines[:len(lines)-1]
}

func writeLines(t testing.TB, lines [][]byte) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), "audit.jsonl")
	if err := os.WriteFile(p, bytes.Join(lines, nil), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestLogRoundTrip(t *testing.T) {
	p := filepath.Join(t.TempDir(), "audit.jsonl")
	l, err := Create(p, testActor, fixedClock(time.Date(2026, 12, 1, 20, 12, 32, 0, time.UTC)))
	if err != nil {
		t.Fatal(err)
	}
	if l.Head() != "" || l.Seq() != 0 {
		t.Fatalf("fresh log: head %q seq %d", l.Head(), l.Seq())
	}
	var recs []Record
	events := []string{"run.started", "plan.bound", "data.bound", "run.finished"}
	for i, ev := range events {
		r, err := l.Append(ev, map[string]any{"n": i, "seed": "18446744073709551615"})
		if err != nil {
			t.Fatal(err)
		}
		recs = append(recs, r)
		canon, _ := Canonical(r)
		if l.Head() != Digest(canon) || l.Seq() != int64(i+1) {
			t.Fatalf("after %s: head %s seq %d", ev, l.Head(), l.Seq())
		}
	}
	if recs[0].Prev != GenesisPrev {
		t.Errorf("first prev = %s", recs[0].Prev)
	}
	head := l.Head()
	if err := l.Close(); err != nil {
		t.Fatal(err)
	}
	if _, err := l.Append("run.finished", map[string]any{}); err == nil {
		t.Error("append after close: no error")
	}
	ch, problems, warnings, err := ReadChain(p)
	if err != nil || len(problems) != 0 || len(warnings) != 0 {
		t.Fatalf("ReadChain: %v %v %v", err, problems, warnings)
	}
	if ch.Head != head || len(ch.Records) != len(events) {
		t.Fatalf("chain head %s (want %s), %d records", ch.Head, head, len(ch.Records))
	}
	for i, r := range ch.Records {
		a, _ := json.Marshal(r)
		b, _ := json.Marshal(recs[i])
		if !bytes.Equal(a, b) {
			t.Errorf("record %d read back as %s, written %s", i+1, a, b)
		}
		if r.Actor.User != "tester" || r.Event != events[i] {
			t.Errorf("record %d: %+v", i+1, r)
		}
	}
	if recs[1].Prev != Digest(mustCanon(t, recs[0])) {
		t.Error("prev of record 2 is not the digest of record 1")
	}
}

func mustCanon(t testing.TB, v any) []byte {
	t.Helper()
	b, err := Canonical(v)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func TestCreateRefusesExisting(t *testing.T) {
	p := filepath.Join(t.TempDir(), "audit.jsonl")
	if err := os.WriteFile(p, []byte("keep"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Create(p, testActor, nil); !errors.Is(err, os.ErrExist) {
		t.Fatalf("Create over an existing file: %v", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "keep" {
		t.Errorf("existing file changed to %q", b)
	}
}

func TestAppendRejects(t *testing.T) {
	p := filepath.Join(t.TempDir(), "audit.jsonl")
	l, err := Create(p, testActor, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	bad := []struct {
		event string
		data  any
	}{
		{"", map[string]int{}},
		{"Run.Started", map[string]int{}},
		{"run..started", map[string]int{}},
		{"run.", map[string]int{}},
		{"run.started", []int{1}},
		{"run.started", nil},
		{"run.started", 3},
		{"run.started", map[string]float64{"x": 0 / zero()}},
	}
	for _, b := range bad {
		if _, err := l.Append(b.event, b.data); err == nil {
			t.Errorf("Append(%q, %v): no error", b.event, b.data)
		}
	}
	if l.Seq() != 0 {
		t.Errorf("rejected appends advanced seq to %d", l.Seq())
	}
	if fi, _ := os.Stat(p); fi.Size() != 0 {
		t.Errorf("rejected appends wrote %d bytes", fi.Size())
	}
}

func zero() float64 { return 0 }

// TestReadChainProblems damages a good log in every way a log can be damaged
// and checks that each is found on the right line.
func TestReadChainProblems(t *testing.T) {
	_, good := writeLog(t, 5)
	clone := func() [][]byte {
		out := make([][]byte, len(good))
		for i, l := range good {
			out[i] = append([]byte(nil), l...)
		}
		return out
	}
	// reseal rewrites record i (0-based) with f applied, as canonical bytes,
	// keeping its own prev (so only the intended check fails).
	reseal := func(lines [][]byte, i int, f func(*Record)) {
		r, err := decodeRecord(bytes.TrimSuffix(lines[i], []byte("\n")))
		if err != nil {
			t.Fatal(err)
		}
		f(&r)
		lines[i] = append(mustCanon(t, r), '\n')
	}
	tests := []struct {
		name   string
		damage func([][]byte) [][]byte
		line   int
		msg    string
	}{
		{"torn last line", func(l [][]byte) [][]byte {
			l[4] = l[4][:len(l[4])-1]
			return l
		}, 5, "torn write"},
		{"torn half record", func(l [][]byte) [][]byte {
			l[4] = l[4][:20]
			return l
		}, 5, "torn write"},
		{"bad prev", func(l [][]byte) [][]byte {
			reseal(l, 2, func(r *Record) { r.Prev = GenesisPrev })
			return l
		}, 3, "prev does not match"},
		{"bad genesis", func(l [][]byte) [][]byte {
			reseal(l, 0, func(r *Record) { r.Prev = Digest(nil) })
			return l
		}, 1, "genesis"},
		{"seq gap", func(l [][]byte) [][]byte {
			reseal(l, 3, func(r *Record) { r.Seq = 7 })
			return l
		}, 4, "seq gap"},
		{"duplicate seq", func(l [][]byte) [][]byte {
			reseal(l, 3, func(r *Record) { r.Seq = 3 })
			return l
		}, 4, "repeats"},
		{"non-canonical whitespace", func(l [][]byte) [][]byte {
			l[1] = append([]byte(" "), l[1]...)
			return l
		}, 2, "canonical"},
		{"non-canonical escape", func(l [][]byte) [][]byte {
			l[1] = bytes.Replace(l[1], []byte(`"tester"`), []byte(`"\u0074ester"`), 1)
			return l
		}, 2, "canonical"},
		{"CRLF", func(l [][]byte) [][]byte {
			l[2] = append(l[2][:len(l[2])-1], '\r', '\n')
			return l
		}, 3, "canonical"},
		{"unknown field", func(l [][]byte) [][]byte {
			l[1] = bytes.Replace(l[1], []byte(`{"actor"`), []byte(`{"a_extra":1,"actor"`), 1)
			return l
		}, 2, "unknown field"},
		{"unknown nested field", func(l [][]byte) [][]byte {
			l[1] = bytes.Replace(l[1], []byte(`"host"`), []byte(`"extra":1,"host"`), 1)
			return l
		}, 2, "unknown field"},
		{"wrong schema", func(l [][]byte) [][]byte {
			reseal(l, 0, func(r *Record) { r.Schema = "https://rankplan.invalid/schema/audit-record-v2.json" })
			return l
		}, 1, "unknown schema"},
		{"bad time", func(l [][]byte) [][]byte {
			reseal(l, 1, func(r *Record) { r.Time = "2026-12-01T20:12:32.1Z" })
			return l
		}, 2, "time"},
		{"data not object", func(l [][]byte) [][]byte {
			reseal(l, 1, func(r *Record) { r.Data = json.RawMessage(`[1]`) })
			return l
		}, 2, "data is not a JSON object"},
		{"swapped lines", func(l [][]byte) [][]byte {
			l[1], l[2] = l[2], l[1]
			return l
		}, 2, "seq gap"},
		{"deleted middle line", func(l [][]byte) [][]byte {
			return append(l[:2], l[3:]...)
		}, 3, "seq gap"},
		{"empty line", func(l [][]byte) [][]byte {
			l[2] = []byte("\n")
			return l
		}, 3, "empty line"},
		{"trailing garbage", func(l [][]byte) [][]byte {
			l[1] = append(l[1][:len(l[1])-1], []byte(" {}\n")...)
			return l
		}, 2, "data after"},
		{"not json", func(l [][]byte) [][]byte {
			l[0] = []byte("hello\n")
			return l
		}, 1, "not a record"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := writeLines(t, tc.damage(clone()))
			_, problems, _, err := ReadChain(p)
			if err != nil {
				t.Fatal(err)
			}
			found := false
			for _, pr := range problems {
				if pr.Line == tc.line && strings.Contains(pr.Msg, tc.msg) {
					found = true
				}
				if pr.File != p {
					t.Errorf("problem names file %q, want %q", pr.File, p)
				}
			}
			if !found {
				t.Errorf("no problem %q on line %d; got %v", tc.msg, tc.line, problems)
			}
			if !sort.SliceIsSorted(problems, func(i, j int) bool { return problems[i].Line < problems[j].Line }) {
				t.Errorf("problems not sorted by line: %v", problems)
			}
		})
	}
}

func TestReadChainEmptyAndMissing(t *testing.T) {
	p := writeLines(t, nil)
	ch, problems, _, err := ReadChain(p)
	if err != nil || len(problems) != 1 || problems[0].Line != 1 || ch.Head != "" {
		t.Errorf("empty file: %v %v %+v", err, problems, ch)
	}
	if _, _, _, err := ReadChain(filepath.Join(t.TempDir(), "none.jsonl")); err == nil {
		t.Error("missing file: no error")
	}
}

// TestReadChainFlippedBytes flips one bit at many positions of a good log.
// Every flip must give at least one problem, on the line holding the byte or
// (for a flipped newline, which joins or splits lines) next to it, except
// that a change to the last record that keeps it a valid record can only be
// seen from outside: the chain head then differs from the original head
// (this is why the head must be anchored, AUDIT.md §2.2).
func TestReadChainFlippedBytes(t *testing.T) {
	p0, _ := writeLog(t, 4)
	content, err := os.ReadFile(p0)
	if err != nil {
		t.Fatal(err)
	}
	lineOf := make([]int, len(content))
	n := 1
	for i, c := range content {
		lineOf[i] = n
		if c == '\n' {
			n++
		}
	}
	ch0, problems0, _, err := ReadChain(p0)
	if err != nil || len(problems0) != 0 {
		t.Fatalf("good log: %v %v", problems0, err)
	}
	dir := t.TempDir()
	for pos := 0; pos < len(content); pos += 3 {
		for _, bit := range []byte{0x01, 0x20, 0x80} {
			b := append([]byte(nil), content...)
			b[pos] ^= bit
			p := filepath.Join(dir, "flip.jsonl")
			if err := os.WriteFile(p, b, 0o644); err != nil {
				t.Fatal(err)
			}
			ch, problems, _, err := ReadChain(p)
			if err != nil {
				t.Fatal(err)
			}
			if len(problems) == 0 && lineOf[pos] == n-1 && ch.Head != ch0.Head {
				continue // last record changed: only the head shows it
			}
			if len(problems) == 0 {
				t.Fatalf("flip of bit %#x at byte %d (line %d) not found: %q", bit, pos, lineOf[pos], b[max(0, pos-40):min(len(b), pos+10)])
			}
			ok := false
			for _, pr := range problems {
				if pr.Line >= lineOf[pos] && pr.Line <= lineOf[pos]+1 {
					ok = true
				}
			}
			if !ok {
				t.Errorf("flip at byte %d (line %d): problems on other lines only: %v", pos, lineOf[pos], problems)
			}
		}
	}
}

func TestReadChainTimeGoesBack(t *testing.T) {
	p := filepath.Join(t.TempDir(), "audit.jsonl")
	times := []time.Time{
		time.Date(2026, 12, 1, 20, 0, 0, 0, time.UTC),
		time.Date(2026, 12, 1, 19, 0, 0, 0, time.UTC), // clock stepped back
		time.Date(2026, 12, 1, 21, 0, 0, 0, time.UTC),
	}
	i := 0
	l, err := Create(p, testActor, func() time.Time { i++; return times[i-1] })
	if err != nil {
		t.Fatal(err)
	}
	for range times {
		if _, err := l.Append("run.step", struct{}{}); err != nil {
			t.Fatal(err)
		}
	}
	l.Close()
	_, problems, warnings, err := ReadChain(p)
	if err != nil || len(problems) != 0 {
		t.Fatalf("problems %v err %v", problems, err)
	}
	if len(warnings) != 1 || warnings[0].Line != 2 {
		t.Errorf("warnings %v, want one on line 2", warnings)
	}
}

func TestFormatTime(t *testing.T) {
	tests := []struct {
		in   time.Time
		want string
	}{
		{time.Date(2026, 12, 1, 20, 12, 32, 123456789, time.UTC), "2026-12-01T20:12:32.123456789Z"},
		{time.Date(2026, 12, 1, 12, 0, 0, 120000000, time.UTC), "2026-12-01T12:00:00.120000000Z"},
		{time.Date(2026, 12, 1, 12, 0, 0, 0, time.FixedZone("x", 3600)), "2026-12-01T11:00:00.000000000Z"},
		{time.Date(1, 1, 1, 0, 0, 0, 0, time.UTC), "0001-01-01T00:00:00.000000000Z"},
	}
	for _, tc := range tests {
		if got := FormatTime(tc.in); got != tc.want {
			t.Errorf("FormatTime(%v) = %s, want %s", tc.in, got, tc.want)
		}
	}
}

// TestFormatTimeSorts is a property test: over random pairs of times in
// years 0001–9999, FormatTime has fixed width and string order is time order.
func TestFormatTimeSorts(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	lo := time.Date(1, 1, 1, 0, 0, 0, 0, time.UTC).UnixNano() / 1e9
	hi := time.Date(9999, 12, 31, 23, 59, 59, 0, time.UTC).Unix()
	random := func() time.Time {
		sec := lo + r.Int64N(hi-lo)
		// Half the draws share a second so the fraction decides the order.
		return time.Unix(sec, r.Int64N(1e9)).In(time.FixedZone("z", int(r.Int64N(86400))-43200))
	}
	for i := 0; i < 20000; i++ {
		a := random()
		b := random()
		if i%2 == 0 {
			b = time.Unix(a.Unix(), r.Int64N(1e9))
		}
		fa, fb := FormatTime(a), FormatTime(b)
		if len(fa) != 30 || len(fb) != 30 {
			t.Fatalf("width: %q %q", fa, fb)
		}
		if (fa < fb) != a.Before(b) || (fa == fb) != a.Equal(b) {
			t.Fatalf("order: %v %v -> %s %s", a, b, fa, fb)
		}
		if _, ok := parseTime(fa); !ok {
			t.Fatalf("parseTime(%s) failed", fa)
		}
	}
}

func TestCurrentActor(t *testing.T) {
	env := map[string]string{
		"GITHUB_RUN_ID": "42", "GITHUB_SHA": "abc", "CI": "true",
		"SECRET_TOKEN": "hunter2", "BUILD_NUMBER": "", "USER": "envuser",
	}
	a := CurrentActor(func(k string) string { return env[k] }, "Dr. S", "rerun after fix")
	want := map[string]string{"GITHUB_RUN_ID": "42", "GITHUB_SHA": "abc", "CI": "true"}
	if len(a.CI) != len(want) {
		t.Errorf("CI = %v, want %v", a.CI, want)
	}
	for k, v := range want {
		if a.CI[k] != v {
			t.Errorf("CI[%s] = %q, want %q", k, a.CI[k], v)
		}
	}
	if a.User == "" || a.Signer != "Dr. S" || a.Reason != "rerun after fix" {
		t.Errorf("actor %+v", a)
	}
	if h, err := os.Hostname(); err == nil && a.Host != h {
		t.Errorf("host %q, want %q", a.Host, h)
	}
	if b := CurrentActor(func(string) string { return "" }, "", ""); b.CI != nil {
		t.Errorf("no CI variables: CI = %v", b.CI)
	}
}
