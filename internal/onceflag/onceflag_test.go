package onceflag

import (
	"flag"
	"io"
	"strings"
	"testing"
)

type list []string

func (l *list) String() string     { return strings.Join(*l, ",") }
func (l *list) Set(s string) error { *l = append(*l, s); return nil }
func (l *list) Repeatable()        {}

func TestParse(t *testing.T) {
	newSet := func() (*flag.FlagSet, *int, *bool, *list) {
		fs := flag.NewFlagSet("t", flag.ContinueOnError)
		fs.SetOutput(io.Discard)
		var l list
		fs.Var(&l, "in", "repeatable")
		return fs, fs.Int("n", 1, "a number"), fs.Bool("v", false, "a switch"), &l
	}
	fs, n, v, l := newSet()
	if err := Parse(fs, func() error { return fs.Parse([]string{"-n", "3", "-v", "-in", "a", "-in", "b"}) }); err != nil {
		t.Fatal(err)
	}
	if *n != 3 || !*v || len(*l) != 2 {
		t.Errorf("parsed n=%d v=%v in=%v, want 3, true, [a b]", *n, *v, *l)
	}
	if _, ok := fs.Lookup("n").Value.(*once); ok {
		t.Error("the wrapper is still in place after Parse")
	}
	for _, args := range [][]string{{"-n", "3", "-n", "4"}, {"-v", "-v"}} {
		fs, _, _, _ := newSet()
		err := Parse(fs, func() error { return fs.Parse(args) })
		if err == nil || !strings.Contains(err.Error(), "more than once") {
			t.Errorf("%v: error %v, want one saying the flag was given more than once", args, err)
		}
	}
}
