// Command rankplan runs preregistered rank-based analysis plans reproducibly.
//
// See `rankplan --help`, README.md and DEVELOPERS.md.
package main

import "os"

func main() {
	os.Exit(Main(os.Args[1:], os.Stdout, os.Stderr))
}
