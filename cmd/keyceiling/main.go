// Command keyceiling computes upper bounds on the two-way assisted secret-key and quantum
// capacities of phase-insensitive bosonic Gaussian channels (thermal loss, amplifiers,
// additive noise) by searching Gaussian squashing maps, and certifies every bound with its map.
//
// The numbers are upper bounds in an idealised channel model, not a security proof for any
// deployed link.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
)

// Exit statuses.
const (
	exitOK      = 0
	exitFailure = 1 // a check failed or a search could not certify a bound
	exitUsage   = 2 // bad input: flags, plan files, result or map files
)

// usageError marks bad input: it is printed as one line and exits with status 2.
type usageError struct{ err error }

func (e usageError) Error() string { return e.err.Error() }
func (e usageError) Unwrap() error { return e.err }

func badInput(format string, a ...any) error { return usageError{fmt.Errorf(format, a...)} }

type command struct {
	name    string
	summary string
	run     func(args []string, stdout, stderr io.Writer) error
}

func commands() []command {
	return []command{
		{"bound", "search squashing maps for one channel and energy; print the certified bound", runBound},
		{"refs", "print the closed-form reference bounds at a point or over a grid (no search)", runRefs},
		{"sweep", "search a grid of points (a plan) with warm starts, shards and resume; no arguments: a demo", runSweep},
		{"merge", "combine the shard files of an output folder into records.jsonl and summary.csv", runMerge},
		{"check", "re-verify every record of a file or folder on its own (exit 1 if any fails)", runCheck},
		{"table", "tabulate result records as Markdown, CSV or LaTeX", runTable},
		{"plot", "draw a figure (SVG, PNG or PDF) from result records", runPlot},
		{"jobscript", "print a Slurm job script that runs a plan as an array of shards and merges them", runJobscript},
		{"version", "print the version", runVersion},
	}
}

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// run executes one command line and returns the exit status.
func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 || args[0] == "-h" || args[0] == "--help" || args[0] == "help" {
		printHelp(stdout)
		if len(args) == 0 {
			return exitUsage
		}
		return exitOK
	}
	for _, c := range commands() {
		if c.name == args[0] {
			err := c.run(args[1:], stdout, stderr)
			return report(err, c.name, stderr)
		}
	}
	fmt.Fprintf(stderr, "keyceiling: unknown command %q (see keyceiling --help)\n", args[0])
	return exitUsage
}

// errHelp is returned by a command that printed its help on request.
var errHelp = errors.New("help shown")

func report(err error, name string, stderr io.Writer) int {
	if err == nil || errors.Is(err, errHelp) {
		return exitOK
	}
	msg := strings.ReplaceAll(err.Error(), "\n", "; ")
	fmt.Fprintf(stderr, "keyceiling %s: %s\n", name, msg)
	var ue usageError
	if errors.As(err, &ue) {
		return exitUsage
	}
	return exitFailure
}

func printHelp(w io.Writer) {
	fmt.Fprintln(w, "keyceiling: certified squashed-entanglement upper bounds for bosonic Gaussian channels")
	fmt.Fprintln(w, "\nUsage: keyceiling COMMAND [flags]   (keyceiling COMMAND --help for its flags)")
	fmt.Fprintln(w, "\nCommands:")
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-10s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w, "\nThe numbers are upper bounds on capacities of an idealised channel model, not a")
	fmt.Fprintln(w, "security claim about any deployed link.")
}

func runVersion(args []string, stdout, _ io.Writer) error {
	if len(args) > 0 {
		return badInput("version takes no arguments")
	}
	fmt.Fprintln(stdout, "keyceiling", versionString())
	return nil
}
