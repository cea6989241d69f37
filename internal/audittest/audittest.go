// Package audittest rewrites run folders the way a forger with write access would, for
// tamper tests of verify: it edits records or files and then repairs every hash that a
// plain check of the chain and the head file would look at.
package audittest

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"strconv"

	"rankplan/runner/audit"
)

// Rechain reads the audit log at logPath, lets edit change its records, and writes them
// back with a consistent chain: for record n (1-based)
//
//	seq(n) = n,  prev(1) = audit.GenesisPrev,  prev(n) = Digest(JCS(record n-1))
//
// and the new head, Digest(JCS(last record)) + "\n", to headPath. It returns that head.
func Rechain(logPath, headPath string, edit func([]audit.Record) []audit.Record) (string, error) {
	chain, problems, _, err := audit.ReadChain(logPath)
	if err != nil {
		return "", fmt.Errorf("rechain: %w", err)
	}
	if len(problems) > 0 {
		return "", fmt.Errorf("rechain %s: %w", logPath, problems[0])
	}
	recs := edit(chain.Records)
	var out bytes.Buffer
	prev := audit.GenesisPrev
	for i := range recs {
		recs[i].Seq = int64(i + 1)
		recs[i].Prev = prev
		line, err := audit.Canonical(recs[i])
		if err != nil {
			return "", fmt.Errorf("rechain record %d: %w", i+1, err)
		}
		out.Write(line)
		out.WriteByte('\n')
		prev = audit.Digest(line)
	}
	if err := os.WriteFile(logPath, out.Bytes(), 0o644); err != nil {
		return "", fmt.Errorf("rechain: %w", err)
	}
	if err := os.WriteFile(headPath, []byte(prev+"\n"), 0o644); err != nil {
		return "", fmt.Errorf("rechain: %w", err)
	}
	return prev, nil
}

// ForgeFile replaces the first occurrence of old with new in the file at filePath, writes
// the file's new SHA-256 and size into the output.written record that names the file (by
// its base name, as a run records it), leaving every other field of that record as it was
// (a results_digest among them), and re-chains the log with [Rechain].
func ForgeFile(logPath, headPath, filePath, name, old, new string) error {
	b, err := os.ReadFile(filePath)
	if err != nil {
		return fmt.Errorf("forge: %w", err)
	}
	edited := bytes.Replace(b, []byte(old), []byte(new), 1)
	if bytes.Equal(edited, b) {
		return fmt.Errorf("forge %s: %q not found", filePath, old)
	}
	if err := os.WriteFile(filePath, edited, 0o644); err != nil {
		return fmt.Errorf("forge: %w", err)
	}
	newSum := audit.Digest(edited)
	found := false
	_, err = Rechain(logPath, headPath, func(recs []audit.Record) []audit.Record {
		for i, rec := range recs {
			var d struct {
				File   string
				SHA256 string `json:"sha256"`
			}
			if rec.Event != "output.written" || json.Unmarshal(rec.Data, &d) != nil || d.File != name {
				continue
			}
			recs[i].Data = bytes.Replace(rec.Data, []byte(`"`+d.SHA256+`"`), []byte(`"`+newSum+`"`), 1)
			recs[i].Data = bytes.Replace(recs[i].Data, []byte(`"bytes":`+strconv.Itoa(len(b))+`,`), []byte(`"bytes":`+strconv.Itoa(len(edited))+`,`), 1)
			found = true
		}
		return recs
	})
	if err == nil && !found {
		err = errors.New("no output.written record names " + name)
	}
	if err != nil {
		return fmt.Errorf("forge %s: %w", filePath, err)
	}
	return nil
}
