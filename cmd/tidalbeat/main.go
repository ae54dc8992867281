// Command tidalbeat turns wearable physiology recordings into feature tables.
//
// Each subcommand lives in its own file (cmd_<name>.go) and registers itself
// in init with register. Usage: tidalbeat SUBCOMMAND [flags] [args].
//
// Research software, not a medical device: see the README.
package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"sort"
)

// subcommand is one verb of the command line.
type subcommand struct {
	name    string
	summary string
	// run executes the verb with its own arguments (without the verb) and
	// writes results to stdout, diagnostics to stderr.
	run func(args []string, stdout, stderr io.Writer) error
}

var subcommands = map[string]subcommand{}

// register adds a verb; it is called from init functions.
func register(c subcommand) {
	if _, dup := subcommands[c.name]; dup {
		panic("tidalbeat: subcommand registered twice: " + c.name)
	}
	subcommands[c.name] = c
}

// errUsage marks a command-line mistake: the caller prints usage.
var errUsage = errors.New("usage")

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// run dispatches args to a subcommand and returns the process exit code.
// Errors are printed as one line on stderr; no stack traces.
func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 || args[0] == "-h" || args[0] == "-help" || args[0] == "--help" || args[0] == "help" {
		printUsage(stderr)
		if len(args) == 0 {
			return 2
		}
		return 0
	}
	c, ok := subcommands[args[0]]
	if !ok {
		fmt.Fprintf(stderr, "tidalbeat: unknown subcommand %q\n", args[0])
		printUsage(stderr)
		return 2
	}
	if err := c.run(args[1:], stdout, stderr); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return 0
		}
		fmt.Fprintf(stderr, "tidalbeat %s: %v\n", c.name, err)
		if errors.Is(err, errUsage) {
			return 2
		}
		return 1
	}
	return 0
}

func printUsage(w io.Writer) {
	fmt.Fprintln(w, "usage: tidalbeat SUBCOMMAND [flags] [args]")
	fmt.Fprintln(w, "\nsubcommands:")
	names := make([]string, 0, len(subcommands))
	for n := range subcommands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-10s %s\n", n, subcommands[n].summary)
	}
	fmt.Fprintln(w, "\nResearch software, not a medical device.")
}

// newFlags returns a flag set for a subcommand that reports errors instead
// of exiting, writing its usage to stderr.
func newFlags(name string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet("tidalbeat "+name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	return fs
}

// parseInterspersed parses flags that may appear before or after the
// positional arguments (tidalbeat rpeaks REC -o x.csv) and returns the
// positional arguments.
func parseInterspersed(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return nil, err
			}
			return nil, fmt.Errorf("%w: %v", errUsage, err)
		}
		args = fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}
