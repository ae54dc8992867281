package main

import (
	"bytes"
	"flag"
	"strings"
	"testing"
)

func TestUnknownSubcommand(t *testing.T) {
	var out, errb bytes.Buffer
	if code := run([]string{"no-such-verb"}, &out, &errb); code != 2 {
		t.Fatalf("exit code %d, want 2 (common practice: 2 for usage errors)", code)
	}
	if !strings.Contains(errb.String(), "unknown subcommand") {
		t.Fatalf("stderr %q does not name the problem", errb.String())
	}
}

func TestParseInterspersed(t *testing.T) {
	fs := flag.NewFlagSet("x", flag.ContinueOnError)
	o := fs.String("o", "", "")
	pos, err := parseInterspersed(fs, []string{"rec", "-o", "out.csv", "rec2"})
	if err != nil {
		t.Fatal(err)
	}
	if *o != "out.csv" || len(pos) != 2 || pos[0] != "rec" || pos[1] != "rec2" {
		t.Fatalf("got o=%q pos=%v", *o, pos)
	}
}
