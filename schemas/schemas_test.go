package schemas

import (
	"encoding/json"
	"strings"
	"testing"
)

func TestCompile(t *testing.T) {
	for _, load := range []func() (any, any, error){
		func() (any, any, error) { return Plan() },
		func() (any, any, error) { return Results() },
		func() (any, any, error) { return Validation() },
		func() (any, any, error) { return AuditRecord() },
	} {
		s, tree, err := load()
		if err != nil || s == nil || tree == nil {
			t.Fatalf("compile: %v", err)
		}
	}
}

func TestSource(t *testing.T) {
	for _, name := range Names {
		b, err := Source(name)
		if err != nil {
			t.Fatal(err)
		}
		var v map[string]any
		if err := json.Unmarshal(b, &v); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if id, _ := v["$id"].(string); !strings.HasPrefix(id, "https://") || v["$schema"] != "https://json-schema.org/draft/2020-12/schema" {
			t.Errorf("%s: $id %q $schema %v", name, id, v["$schema"])
		}
	}
	if _, err := Source("report"); err == nil {
		t.Error("unknown schema name accepted")
	}
}
