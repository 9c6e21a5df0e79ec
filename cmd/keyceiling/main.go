// Command keyceiling computes upper bounds on the two-way assisted secret-key capacity of
// phase-insensitive bosonic Gaussian channels by searching Gaussian squashing maps.
package main

import (
	"fmt"
	"os"
)

func main() {
	fmt.Fprintln(os.Stderr, "keyceiling: under construction")
	os.Exit(2)
}
