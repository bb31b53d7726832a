package main

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
)

// Sizes with binary (IEC 80000-13: KiB = 2^10 bytes) and decimal (SI: kB =
// 10^3 bytes) units.
func TestParseBytes(t *testing.T) {
	for _, c := range []struct {
		in   string
		want float64
	}{
		{"2GiB", 2 << 30}, {"500MB", 500e6}, {"1.5gib", 1.5 * (1 << 30)}, {"1000000", 1e6}, {"64 KiB", 64 << 10}, {"3b", 3},
	} {
		if got, err := parseBytes(c.in); err != nil || got != c.want {
			t.Errorf("parseBytes(%q) = %v, %v; want %v", c.in, got, err, c.want)
		}
	}
	for _, bad := range []string{"", "0", "-1GB", "GB", "2XB", "NaN", "Inf"} {
		if got, err := parseBytes(bad); err == nil {
			t.Errorf("parseBytes(%q) = %v, want an error", bad, got)
		}
	}
}

// The estimate follows hamiltonian.EigenOptions' documented memory,
// (KrylovDim+2)·2^n complex128 values with KrylovDim 40, lowered to 14 at
// 24 qubits, plus the returned state of 2^n values.
func TestExactBytes(t *testing.T) {
	for _, c := range []struct{ n, krylov int }{{10, 40}, {22, 40}, {24, 14}} {
		want := float64(c.krylov+3) * math.Ldexp(16, c.n)
		if got := exactBytes(c.n); got != want {
			t.Errorf("exactBytes(%d) = %v, want %v", c.n, got, want)
		}
	}
}

// The shot limit applies to the strategies that choose a setting for every
// shot, not to those that plan whole groups.
func TestCheckShotLimit(t *testing.T) {
	for _, c := range []struct {
		name   string
		refuse bool
	}{{"greedy", true}, {"random", true}, {"importance", true}, {"derand", true}, {"sorted", false}, {"sorted-gc", false}} {
		a, err := allocate.ByName(c.name, 1)
		if err != nil {
			t.Fatal(err)
		}
		err = checkShotLimit(c.name, a, 100_000_000, defaultShotLimit, 8)
		if (err != nil) != c.refuse {
			t.Errorf("%s: 10^8 shots: error %v, want refused %v", c.name, err, c.refuse)
		}
		if err := checkShotLimit(c.name, a, defaultShotLimit, defaultShotLimit, 8); err != nil {
			t.Errorf("%s: shots at the limit refused: %v", c.name, err)
		}
	}
}
