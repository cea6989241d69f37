package schemas

import (
	"bytes"
	_ "embed"
	"encoding/json"
	"fmt"
	"sync"

	"github.com/santhosh-tekuri/jsonschema/v5"
)

// The identifiers under which the schemas are compiled. They are names, not addresses:
// nothing is fetched from them (the .invalid top-level domain never resolves, RFC 2606).
const (
	PlanID    = "https://rankplan.invalid/schema/plan-v1.json"
	ResultsID = "https://rankplan.invalid/schema/results-v1.json"
	// ValidationID names the schema of validation.json, the record `rankplan selftest` writes.
	ValidationID = "https://rankplan.invalid/schema/validation-v1.json"
	// AuditRecordID names the schema of one audit record (a line of audit.jsonl).
	AuditRecordID = "https://rankplan.invalid/schema/audit-record-v1.json"
)

var (
	//go:embed plan.schema.json
	planJSON []byte
	//go:embed results.schema.json
	resultsJSON []byte
	//go:embed validation.schema.json
	validationJSON []byte
	//go:embed audit-record.schema.json
	auditRecordJSON []byte
)

// Names lists the schemas that [Source] knows, in the order `rankplan schema` documents them.
var Names = []string{"plan", "results", "validation", "audit-record"}

// Source returns the JSON text of the named schema ("plan", "results", "validation" or
// "audit-record").
func Source(name string) ([]byte, error) {
	switch name {
	case "plan":
		return bytes.Clone(planJSON), nil
	case "results":
		return bytes.Clone(resultsJSON), nil
	case "validation":
		return bytes.Clone(validationJSON), nil
	case "audit-record":
		return bytes.Clone(auditRecordJSON), nil
	}
	return nil, fmt.Errorf("no schema named %q (known: plan, results, validation, audit-record)", name)
}

type compiled struct {
	once   sync.Once
	schema *jsonschema.Schema
	tree   any
	err    error
}

var plan, results, validation, auditRecord compiled

func (c *compiled) load(id string, src []byte) (*jsonschema.Schema, any, error) {
	c.once.Do(func() {
		comp := jsonschema.NewCompiler()
		comp.Draft = jsonschema.Draft2020
		comp.AssertFormat = true
		if err := comp.AddResource(id, bytes.NewReader(src)); err != nil {
			c.err = fmt.Errorf("schema %s: %w", id, err)
			return
		}
		s, err := comp.Compile(id)
		if err != nil {
			c.err = fmt.Errorf("schema %s: %w", id, err)
			return
		}
		// Numbers stay json.Number, so that a bound such as 18446744073709551615 is
		// shown in messages with its exact digits.
		var tree any
		dec := json.NewDecoder(bytes.NewReader(src))
		dec.UseNumber()
		if err := dec.Decode(&tree); err != nil {
			c.err = fmt.Errorf("schema %s: %w", id, err)
			return
		}
		c.schema, c.tree = s, tree
	})
	return c.schema, c.tree, c.err
}

// Plan returns the compiled plan schema and its decoded JSON tree, numbers as
// json.Number (for building messages that name allowed keys, values and bounds). The
// embedded schema is tested to compile, so an error here means a broken build.
func Plan() (*jsonschema.Schema, any, error) { return plan.load(PlanID, planJSON) }

// Results returns the compiled results schema and its decoded JSON tree.
func Results() (*jsonschema.Schema, any, error) { return results.load(ResultsID, resultsJSON) }

// Validation returns the compiled schema of validation.json and its decoded JSON tree.
func Validation() (*jsonschema.Schema, any, error) {
	return validation.load(ValidationID, validationJSON)
}

// Check decodes the JSON text b, keeping numbers exact, and validates it against schema
// (compiled under id); what names the document in the error.
func Check(schema *jsonschema.Schema, id, what string, b []byte) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var v any
	if err := dec.Decode(&v); err != nil {
		return fmt.Errorf("%s are not JSON: %w", what, err)
	}
	if err := schema.Validate(v); err != nil {
		return fmt.Errorf("%s do not match %s: %w", what, id, err)
	}
	return nil
}

// AuditRecord returns the compiled schema of one audit record and its decoded JSON tree.
func AuditRecord() (*jsonschema.Schema, any, error) {
	return auditRecord.load(AuditRecordID, auditRecordJSON)
}
