package folder

import (
	"bytes"
	"encoding/json"
	"fmt"
	"path/filepath"

	"rankplan/runner/audit"
	"rankplan/schemas"
)

// Folder is a folder as [Read] found it.
type Folder struct {
	Dir string
	// Marked says that the folder still carries its working name DIR.incomplete-XXXX.
	Marked bool
	Chain  *audit.Chain
	// Problems are the breaks of the chain (audit.ReadChain) and the records that do not
	// match the audit-record schema; Warnings are the chain's warnings.
	Problems []audit.Problem
	Warnings []audit.Problem
	Kind     *Kind
}

// Output is an output.written record with its record number.
type Output struct {
	Seq int64
	OutputWritten
}

// Read reads the audit log of the folder dir: the chain's checks (audit.ReadChain) and,
// for every record, the audit-record schema. The error is non-nil only when the log
// cannot be read at all; everything else is a Problem.
func Read(dir string) (*Folder, error) {
	f := &Folder{Dir: dir, Marked: IncompleteName.MatchString(filepath.Base(filepath.Clean(dir)))}
	ch, problems, warnings, err := audit.ReadChain(filepath.Join(dir, AuditFile))
	if err != nil {
		return f, err
	}
	f.Chain, f.Problems, f.Warnings = ch, problems, warnings
	if len(ch.Records) == 0 {
		f.Kind = Run
		return f, nil
	}
	f.Kind = KindOf(ch.Records[0].Event)
	for _, rec := range ch.Records {
		if err := ValidateRecord(rec); err != nil {
			f.Problems = append(f.Problems, audit.Problem{File: AuditFile, Line: int(rec.Seq), Msg: err.Error()})
		}
	}
	return f, nil
}

// ValidateRecord checks one record against the audit-record schema (schemas.AuditRecordID).
func ValidateRecord(rec audit.Record) error {
	b, err := json.Marshal(rec)
	if err != nil {
		return err
	}
	schema, _, err := schemas.AuditRecord()
	if err != nil {
		return err
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var v any
	if err := dec.Decode(&v); err != nil {
		return fmt.Errorf("record %d (%s) is not JSON: %w", rec.Seq, rec.Event, err)
	}
	if err := schema.Validate(v); err != nil {
		return fmt.Errorf("record %d (%s) does not match %s: %w", rec.Seq, rec.Event, schemas.AuditRecordID, err)
	}
	return nil
}

// Last returns the last record (the zero Record for an empty log).
func (f *Folder) Last() audit.Record {
	if f.Chain == nil || len(f.Chain.Records) == 0 {
		return audit.Record{}
	}
	return f.Chain.Records[len(f.Chain.Records)-1]
}

// Events returns the events of the log in order.
func (f *Folder) Events() []string {
	var out []string
	if f.Chain != nil {
		for _, r := range f.Chain.Records {
			out = append(out, r.Event)
		}
	}
	return out
}

// Finished reports whether the log ends with the kind's Finished record.
func (f *Folder) Finished() bool { return f.Last().Event == f.Kind.Finished }

// First decodes the data of the first record of event into v, and reports whether there
// was one that decoded.
func (f *Folder) First(event string, v any) bool {
	if f.Chain == nil {
		return false
	}
	for _, r := range f.Chain.Records {
		if r.Event == event {
			return Decode(r, v) == nil
		}
	}
	return false
}

// Outputs returns the output.written records in order. A record whose data do not decode
// is returned with an empty File.
func (f *Folder) Outputs() []Output {
	var out []Output
	if f.Chain == nil {
		return nil
	}
	for _, r := range f.Chain.Records {
		if r.Event == EventOutputWritten {
			o := Output{Seq: r.Seq}
			if Decode(r, &o.OutputWritten) != nil {
				o.OutputWritten = OutputWritten{}
			}
			out = append(out, o)
		}
	}
	return out
}

// Decode decodes a record's data into v, refusing members v does not know.
func Decode(r audit.Record, v any) error {
	dec := json.NewDecoder(bytes.NewReader(r.Data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return fmt.Errorf("record %d (%s): %w", r.Seq, r.Event, err)
	}
	return nil
}
