package main

import (
	"bytes"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"rankplan/runner"
)

// TestInitLists: the comma-separated flags of init, read item by item.
func TestInitLists(t *testing.T) {
	many := make([]string, runner.MaxGroups+1)
	for i := range many {
		many[i] = "g" + strconv.Itoa(i)
	}
	for _, c := range []struct {
		name, in string
		// items is what listItems gives; groups what groupList gives, or its error.
		items, groups []string
		groupErr      string
	}{
		{"spaces around items dropped", " A , B ,C", []string{"A", "B", "C"}, []string{"A", "B", "C"}, ""},
		{"a trailing comma is an empty item", "n/a,NA,", []string{"n/a", "NA", ""}, nil, `a group name is empty`},
		{"the empty text is one empty item", "", []string{""}, nil, `a group name is empty`},
		{"inner spaces stay", "dose 1,dose 2", []string{"dose 1", "dose 2"}, []string{"dose 1", "dose 2"}, ""},
		{"one group", "A", []string{"A"}, nil, "name at least 2 groups"},
		{"twice after trimming", "A, A", []string{"A", "A"}, nil, `the group "A" is listed twice`},
		{"the limit of groups", strings.Join(many[:runner.MaxGroups], ","), many[:runner.MaxGroups], many[:runner.MaxGroups], ""},
		{"over the limit of groups", strings.Join(many, ","), many, nil, "1001 groups, more than the limit of 1000"},
	} {
		t.Run(c.name, func(t *testing.T) {
			if got := listItems(c.in); !reflect.DeepEqual(got, c.items) {
				t.Errorf("listItems(%q) = %q, want %q", c.in, got, c.items)
			}
			got, err := groupList(c.in)
			if c.groupErr != "" {
				if err == nil || !strings.Contains(err.Error(), c.groupErr) {
					t.Errorf("groupList(%q): error %v, want %q", c.in, err, c.groupErr)
				}
				if _, ok := err.(*usageError); !ok {
					t.Errorf("groupList(%q): %T is not a usage error", c.in, err)
				}
				return
			}
			if err != nil || !reflect.DeepEqual(got, c.groups) {
				t.Errorf("groupList(%q) = %q, %v", c.in, got, err)
			}
		})
	}
}

// TestInitColumns: --columns read into the plan's comment, with spaces around names and
// kinds dropped.
func TestInitColumns(t *testing.T) {
	o := &runner.DraftOptions{ExpectPath: "d.csv", Group: "dose", Outcome: "weight"}
	got, err := layoutColumns("site : text, dose:text ,weight: number", o)
	want := []string{`"site" (text)`, `"dose" (text)`, `"weight" (number)`}
	if err != nil || !reflect.DeepEqual(got, want) {
		t.Errorf("layoutColumns = %q, %v; want %q", got, err, want)
	}
	if _, err := layoutColumns("dose:text,weight:Number", o); err == nil {
		t.Error("a kind in capitals was accepted")
	}
}

// TestInitNotUTF8: a flag's text that is not UTF-8 is a usage error (exit 2) naming the
// flag; labels and tokens are matched against UTF-8 cells, and the plan is UTF-8 YAML.
func TestInitNotUTF8(t *testing.T) {
	for _, c := range []struct{ args []string }{
		{[]string{"--group", "g\xff"}},
		{[]string{"--groups", "A,\xffB"}},
		{[]string{"--missing", "n\xe9a"}},
		{[]string{"--unit", "\xb5g"}},
	} {
		args := append([]string{"init", "--expect-data", "d.csv", "--group", "g", "--outcome", "y"}, c.args...)
		var stdout, stderr bytes.Buffer
		code := Main(args, &stdout, &stderr)
		want := "rankplan: init: " + c.args[0] + " " + strconv.Quote(c.args[1]) + ": not valid UTF-8 text\n"
		if code != 2 || !strings.HasPrefix(stderr.String(), want) || stdout.Len() > 0 {
			t.Errorf("%q: exit %d, stderr %q, stdout %q; want exit 2 and %q", c.args, code, stderr.String(), stdout.String(), want)
		}
	}
}
