package stream_test

import (
	"fmt"

	"rankplan/stats/stream"
)

func ExampleKey() {
	// Block 1 of the permutation stream of analysis "primary" under seed 12345.
	key := stream.Key("kw-permutation", 12345, "primary", 1)
	fmt.Printf("%x\n", key)
	// Output:
	// 1e010b56279ac034ed6b98f25bf8b350e052572d511ba9de10023aab7ccc5327
}

// The draws of the examples are also reproduced by testdata/stream_ref.py (the
// independent Python implementation).

func ExampleStream_Below() {
	s := stream.New(stream.Key("example", 1, "dice", 0))
	for range 10 {
		fmt.Print(s.Below(6)+1, " ")
	}
	fmt.Println()
	// Output:
	// 5 3 2 3 3 2 2 5 5 4
}

func ExampleShuffleInt32() {
	labels := []int32{0, 0, 0, 1, 1, 1, 2, 2, 2}
	stream.ShuffleInt32(stream.New(stream.Key("kw-permutation", 7, "example", 0)), labels)
	fmt.Println(labels)
	// Output:
	// [0 2 0 1 1 1 2 0 2]
}

func ExampleIndices() {
	// A bootstrap resample of 8 items: 8 indices drawn with replacement.
	idx := make([]int, 8)
	stream.Indices(stream.New(stream.Key("bootstrap", 7, "example", 0)), idx, 8)
	fmt.Println(idx)
	// Output:
	// [3 4 0 0 2 2 5 2]
}
