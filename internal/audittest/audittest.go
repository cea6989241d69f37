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
	"rankplan/runner/folder"
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
			if rec.Event != folder.EventOutputWritten || json.Unmarshal(rec.Data, &d) != nil || d.File != name {
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

// EditData lets edit change the data of every record of the log at logPath for which
// match reports true, then re-chains the log with [Rechain] and returns the new head.
// edit receives the record's data as a JSON object, numbers kept as [json.Number] so that
// they are written back exactly as read; a record whose data is not an object, or a log in
// which no record matches, is an error.
func EditData(logPath, headPath string, match func(audit.Record) bool, edit func(data map[string]any)) (string, error) {
	var failure error
	matched := 0
	head, err := Rechain(logPath, headPath, func(recs []audit.Record) []audit.Record {
		for i, rec := range recs {
			if failure != nil || !match(rec) {
				continue
			}
			matched++
			dec := json.NewDecoder(bytes.NewReader(rec.Data))
			dec.UseNumber()
			var d map[string]any
			err := dec.Decode(&d)
			if err == nil && d == nil {
				err = errors.New("null")
			}
			if err != nil {
				failure = fmt.Errorf("record %d (%s): the data are not a JSON object: %w", rec.Seq, rec.Event, err)
				continue
			}
			edit(d)
			b, err := json.Marshal(d)
			if err != nil {
				failure = fmt.Errorf("record %d (%s): %w", rec.Seq, rec.Event, err)
				continue
			}
			recs[i].Data = b
		}
		return recs
	})
	switch {
	case err != nil:
		return "", fmt.Errorf("edit data: %w", err)
	case failure != nil:
		return "", fmt.Errorf("edit data of %s: %w", logPath, failure)
	case matched == 0:
		return "", fmt.Errorf("edit data of %s: no record matches", logPath)
	}
	return head, nil
}

// RecordsOutput reports whether rec is the output.written record of the file name.
func RecordsOutput(rec audit.Record, name string) bool {
	var d struct{ File string }
	return rec.Event == folder.EventOutputWritten && json.Unmarshal(rec.Data, &d) == nil && d.File == name
}

// Typed decodes a record's data into the typed record of its event ([folder.RunStarted] for
// run.started, [folder.Failure] for run.failed and selftest.failed, ...), refusing unknown
// members; an event that has no typed record is an error. The contract tests of run and
// selftest folders decode every record with it.
func Typed(r audit.Record) (any, error) {
	var v any
	switch r.Event {
	case folder.EventRunStarted:
		v = &folder.RunStarted{}
	case folder.EventPlanBound:
		v = &folder.PlanBound{}
	case folder.EventDataBound:
		v = &folder.DataBound{}
	case folder.EventExclusions:
		v = &folder.ExclusionsApplied{}
	case folder.EventAnalysisFinished:
		v = &folder.AnalysisFinished{}
	case folder.EventOutputWritten:
		v = &folder.OutputWritten{}
	case folder.EventRunFinished:
		v = &folder.RunFinished{}
	case folder.EventRunFailed, folder.EventSelftestFailed:
		v = &folder.Failure{}
	case folder.EventSelftestStarted:
		v = &folder.SelftestStarted{}
	case folder.EventCasesBound:
		v = &folder.CasesBound{}
	case folder.EventCasesEvaluated:
		v = &folder.CasesEvaluated{}
	case folder.EventSelftestFinished:
		v = &folder.SelftestFinished{}
	default:
		return nil, fmt.Errorf("record %d: no record type for event %q", r.Seq, r.Event)
	}
	if err := folder.Decode(r, v); err != nil {
		return nil, err
	}
	return v, nil
}
