package spec_test

import (
	"fmt"

	"rankplan/spec"
)

func ExampleParse() {
	src := []byte(`rankplan: 1
id: example
title: An example
data: {file: data.csv, group: arm, outcome: score}
alpha: 0.05
seed: 7
analyses:
  - id: primary
    test: kruskal-wallis
    pvalue: {method: asymptotic}
`)
	p, err := spec.Parse("plan.yaml", src)
	if err != nil {
		fmt.Println(err)
		return
	}
	a := p.Analyses[0]
	fmt.Println(p.ID, a.ID, a.Test, a.PValue.Method, a.Outcome, p.Data.Delimiter, p.Seed)

	_, err = spec.Parse("plan.yaml", []byte("rankplan: 1\nalpha: 2\n"))
	fmt.Println(err)
	// Output:
	// example primary kruskal-wallis asymptotic score , 7
	// plan.yaml:1:1: (top level): missing required key "analyses"
	// plan.yaml:1:1: (top level): missing required key "data"
	// plan.yaml:1:1: (top level): missing required key "id"
	// plan.yaml:1:1: (top level): missing required key "seed"
	// plan.yaml:1:1: (top level): missing required key "title"
	// plan.yaml:2:8: alpha: expected a value > 0 and < 1; found 2
}
