package main

import (
	"bytes"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/allocate/allocatetest"
)

// TestAnchoredConformance runs the library's conformance suite on the
// user-written strategy.
func TestAnchoredConformance(t *testing.T) {
	allocatetest.Test(t, func(seed uint64) allocate.Allocator { return &anchored{Seed: seed} }, nil)
}

// TestCustom runs the example and checks that every strategy's estimate
// lies within its certified bound of the exact energy (seeded; over seeds
// each row would fail with probability at most δ = 0.05).
func TestCustom(t *testing.T) {
	var out, errOut bytes.Buffer
	if code := run([]string{"-shots", "400", "-seed", "3"}, &out, &errOut); code != 0 {
		t.Fatalf("exit %d, stderr %q", code, errOut.String())
	}
	rows := regexp.MustCompile(`(?m)^\s*(\w+)\s+(\d+)\s+([0-9.]+)\s+(-?[0-9.]+)\s+([0-9.]+)\s+([0-9.]+)\s*$`).FindAllStringSubmatch(out.String(), -1)
	var names []string
	for _, r := range rows {
		names = append(names, r[1])
		bound, _ := strconv.ParseFloat(r[3], 64)
		actual, _ := strconv.ParseFloat(r[5], 64)
		if actual > bound {
			t.Errorf("%s: actual error %v beyond its certified bound %v", r[1], actual, bound)
		}
	}
	if got := strings.Join(names, ","); got != "anchored,greedy,importance" {
		t.Errorf("rows %q, want anchored,greedy,importance:\n%s", got, out.String())
	}
}

// TestCustomBadInput: bad flags give exit status 2 and one line.
func TestCustomBadInput(t *testing.T) {
	for _, args := range [][]string{{"-bogus"}, {"-shots", "x"}, {"-shots", "0"}, {"-delta", "2"}, {"extra"}} {
		var out, errOut bytes.Buffer
		code := run(args, &out, &errOut)
		if e := errOut.String(); code != 2 || strings.Count(e, "\n") != 1 || !strings.HasPrefix(e, "custom: ") || out.Len() != 0 {
			t.Errorf("custom %v: exit %d, stdout %q, stderr %q; want 2, nothing on stdout and one line on stderr", args, code, out.String(), e)
		}
	}
}
