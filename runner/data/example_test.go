package data_test

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"rankplan/runner/data"
)

// The data in these examples is invented.

// writeExample writes text to a file name in a new temporary folder and returns the
// file's path and a function that removes the folder.
func writeExample(name, text string) (string, func()) {
	dir, err := os.MkdirTemp("", "data-example")
	if err != nil {
		panic(err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		panic(err)
	}
	return path, func() { os.RemoveAll(dir) }
}

func ExampleLoadFile_options() {
	path, remove := writeExample("trial.csv", "id;arm;minutes\n"+
		"1;control;12,5\n"+
		"2;\"treated\";9,75\n"+
		"3;control;NA\n"+
		"4;;11\n")
	defer remove()
	tab, err := data.LoadFile(context.Background(), path, data.Options{
		Name:           "trial.csv",
		Delimiter:      ';',
		Decimal:        ',',
		GroupColumn:    "arm",
		OutcomeColumns: []string{"minutes"},
		MissingTokens:  []string{"", "NA"},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("rows:", tab.Rows, "groups:", tab.Groups)
	for i := range tab.Rows {
		fmt.Printf("line %d: group %d, minutes %v\n", tab.Line[i], tab.Group[i], tab.Outcome[0][i])
	}
	// The digest agrees with GNU coreutils sha256sum of the same 66 bytes.
	fmt.Printf("%d bytes, sha256 %x\n", tab.Size, tab.SHA256[:4])
	// Output:
	// rows: 4 groups: [control treated]
	// line 2: group 0, minutes 12.5
	// line 3: group 1, minutes 9.75
	// line 4: group 0, minutes NaN
	// line 5: group -1, minutes 11
	// 66 bytes, sha256 d5917ebe
}

func ExampleLoadFile() {
	tab, err := data.LoadFile(context.Background(), "testdata/bom_crlf.csv", data.Options{
		Delimiter:      ',',
		Decimal:        '.',
		GroupColumn:    "arm",
		OutcomeColumns: []string{"minutes"},
		MissingTokens:  []string{"", "NA"},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(tab.Rows, tab.Groups, tab.Outcome[0])
	// Output:
	// 5 [control treated] [10 11.5 NaN 9 7.25]
}

func ExampleHeader() {
	cols, err := data.Header(strings.NewReader("\ufeffid\tarm\t\"minutes (total)\"\n1\ta\t3\n"),
		data.Options{Name: "x.tsv", Delimiter: '\t'})
	fmt.Printf("%q %v\n", cols, err)
	// Output:
	// ["id" "arm" "minutes (total)"] <nil>
}

func ExampleError() {
	path, remove := writeExample("x.csv", "arm,minutes\na,1\nb,\"inf\"\n")
	defer remove()
	_, err := data.LoadFile(context.Background(), path, data.Options{
		Name: "x.csv", Delimiter: ',', Decimal: '.', GroupColumn: "arm", OutcomeColumns: []string{"minutes"},
	})
	fmt.Println(err)
	var e *data.Error
	if errors.As(err, &e) {
		fmt.Println(e.Line, e.Column, e.Field)
	}
	// Output:
	// x.csv:3:3: column "minutes": cannot read "inf" as a number
	// 3 3 minutes
}
