// Command genjacobi writes gaussian/fast_jacobi_gen.go: the cyclic Jacobi sweeps of
// jacobiLockstep written out entry by entry (go generate in package gaussian runs it).
//
// The rotations cannot be a function: the compiler does not inline one (math.Sqrt and
// math.Copysign put it over the inlining budget), and a call per rotation costs more than
// the rotation's arithmetic. The generated code is checked against the loop form
// (jacobiReference, in the package's tests) bit for bit, and against this generator by
// TestJacobiGeneratedUpToDate.
package main

import (
	"fmt"
	"os"

	"keyceiling/gaussian/internal/genjacobi/gen"
)

func main() {
	out := "fast_jacobi_gen.go"
	if len(os.Args) > 1 {
		out = os.Args[1]
	}
	if err := os.WriteFile(out, []byte(gen.Source()), 0o644); err != nil {
		fmt.Fprintln(os.Stderr, "genjacobi:", err)
		os.Exit(1)
	}
}
