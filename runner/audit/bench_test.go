package audit

import (
	"path/filepath"
	"testing"
	"time"
)

// BenchmarkAppend measures one record written (Append does not sync; see Log.Sync).
func BenchmarkAppend(b *testing.B) {
	l, err := Create(filepath.Join(b.TempDir(), "a.jsonl"), testActor, time.Now)
	if err != nil {
		b.Fatal(err)
	}
	defer l.Close()
	data := map[string]any{"path": "data.csv", "sha256": GenesisPrev, "rows": 10000000}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := l.Append("data.bound", data); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkReadChain checks a 10 000-record log per iteration; the cost is
// linear in the number of records.
func BenchmarkReadChain(b *testing.B) {
	p, _ := writeLogNoSync(b, 10000)
	b.ReportAllocs()
	for b.Loop() {
		_, problems, _, err := ReadChain(p)
		if err != nil || len(problems) != 0 {
			b.Fatal(err, problems)
		}
	}
}

// writeLogNoSync builds a valid log in memory (without per-record fsync)
// and writes it at once.
func writeLogNoSync(b *testing.B, n int) (string, int) {
	var content []byte
	prev := GenesisPrev
	t0 := time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)
	for i := 1; i <= n; i++ {
		data, _ := Canonical(map[string]int{"i": i})
		line, err := Canonical(Record{Schema: RecordSchema, Seq: int64(i), Prev: prev,
			Time: FormatTime(t0.Add(time.Duration(i))), Event: "run.step", Actor: testActor, Data: data})
		if err != nil {
			b.Fatal(err)
		}
		prev = Digest(line)
		content = append(append(content, line...), '\n')
	}
	return writeLines(b, [][]byte{content}), len(content)
}
