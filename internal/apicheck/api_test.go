package apicheck

import (
	"bytes"
	"flag"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"golang.org/x/exp/apidiff"

	"github.com/shotplan/shotplan/internal/atomicfile"
)

var update = flag.Bool("update", false, "rewrite testdata/api.txt and testdata/api.export from the code")

const (
	textFile   = "testdata/api.txt"
	exportFile = "testdata/api.export"
)

// TestAPI compares the exported API of the module with the committed
// record. apidiff (golang.org/x/exp/apidiff, the Go team's checker of
// compatible changes) classifies the differences; any difference fails, the
// incompatible ones listed first.
func TestAPI(t *testing.T) {
	root := filepath.Join("..", "..")
	cur, files, err := Load(root)
	if err != nil {
		t.Fatal(err)
	}
	// The packages were loaded by the go command, which go test does not
	// watch; reading their files (and go.mod) here makes a change of any
	// of them invalidate a cached result of this test.
	for _, name := range append(files, filepath.Join(root, "go.mod")) {
		if _, err := os.ReadFile(name); err != nil {
			t.Fatal(err)
		}
	}
	if len(cur) == 0 {
		t.Fatal("no public package loaded")
	}
	text := Text(cur)
	if *update {
		var buf bytes.Buffer
		if err := WriteExport(&buf, cur); err != nil {
			t.Fatal(err)
		}
		for name, data := range map[string][]byte{textFile: []byte(text), exportFile: buf.Bytes()} {
			if err := atomicfile.Write(name, func(w io.Writer) error { _, err := w.Write(data); return err }); err != nil {
				t.Fatal(err)
			}
		}
		t.Logf("wrote %s and %s (%d packages)", textFile, exportFile, len(cur))
		return
	}
	recText, err := os.ReadFile(textFile)
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(exportFile)
	if err != nil {
		t.Fatal(err)
	}
	old, err := ReadExport(f)
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	if got := Text(old); got != string(recText) {
		t.Fatalf("%s and %s disagree: the record was edited by hand; regenerate both with: go test ./internal/apicheck -update", textFile, exportFile)
	}
	report := apidiff.ModuleChanges(&apidiff.Module{Path: Module, Packages: old}, &apidiff.Module{Path: Module, Packages: cur})
	var incompatible, compatible []string
	for _, c := range report.Changes {
		if c.Compatible {
			compatible = append(compatible, c.Message)
		} else {
			incompatible = append(incompatible, c.Message)
		}
	}
	const how = "if the change is deliberate, regenerate the record with\n\tgo test ./internal/apicheck -update\nand have the change of " + textFile + " reviewed"
	if len(incompatible) > 0 {
		t.Errorf("incompatible changes of the exported API against %s:\n\t%s\n%s", textFile, strings.Join(incompatible, "\n\t"), how)
	}
	if len(compatible) > 0 {
		t.Errorf("compatible changes of the exported API not in %s:\n\t%s\n%s", textFile, strings.Join(compatible, "\n\t"), how)
	}
	if len(report.Changes) == 0 && text != string(recText) {
		t.Errorf("the exported API differs from %s in a way apidiff does not classify:\n%s\n%s", textFile, lineDiff(string(recText), text), how)
	}
}

// lineDiff lists the lines only in a ("-") and only in b ("+").
func lineDiff(a, b string) string {
	in := func(s string) map[string]bool {
		m := map[string]bool{}
		for _, l := range strings.Split(s, "\n") {
			m[l] = true
		}
		return m
	}
	ma, mb := in(a), in(b)
	var out []string
	for _, l := range strings.Split(a, "\n") {
		if !mb[l] {
			out = append(out, "-"+l)
		}
	}
	for _, l := range strings.Split(b, "\n") {
		if !ma[l] {
			out = append(out, "+"+l)
		}
	}
	return strings.Join(out, "\n")
}
