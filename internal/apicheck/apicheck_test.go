package apicheck

import (
	"bytes"
	"go/ast"
	"go/importer"
	"go/parser"
	"go/token"
	"go/types"
	"strings"
	"testing"
)

// check type-checks one file as package path.
func check(t *testing.T, path, src string) *types.Package {
	t.Helper()
	fset := token.NewFileSet()
	f, err := parser.ParseFile(fset, "x.go", src, 0)
	if err != nil {
		t.Fatal(err)
	}
	p, err := (&types.Config{Importer: importer.Default()}).Check(path, fset, []*ast.File{f}, nil)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// The export record round-trips, the text lists exactly the exported
// identifiers (written out by hand here), and damaged records are refused.
func TestRecordRoundTrip(t *testing.T) {
	p := check(t, Module+"/demo", `package demo
const Max = 3
var Default = T{}
type T struct{ A int; b int }
func (T) M(x int) string { return "" }
func (*T) p() {}
type I interface{ N() }
func F(t *T) error { return nil }
func g() {}
`)
	want := strings.Join([]string{
		"pkg " + Module + "/demo, const Max untyped int = 3",
		"pkg " + Module + "/demo, func F(t *T) error",
		"pkg " + Module + "/demo, method (T) M(x int) string",
		"pkg " + Module + "/demo, type I interface",
		"pkg " + Module + "/demo, type I interface, N()",
		"pkg " + Module + "/demo, type T struct",
		"pkg " + Module + "/demo, type T struct, A int",
		"pkg " + Module + "/demo, var Default T",
	}, "\n") + "\n"
	if got := Text([]*types.Package{p}); got != want {
		t.Errorf("Text =\n%s\nwant\n%s", got, want)
	}
	var buf bytes.Buffer
	if err := WriteExport(&buf, []*types.Package{p}); err != nil {
		t.Fatal(err)
	}
	back, err := ReadExport(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if got := Text(back); got != want {
		t.Errorf("Text after a round trip =\n%s\nwant\n%s", got, want)
	}
	for name, bad := range map[string][]byte{
		"header":    []byte("pkg x 3\nabc"),
		"length":    []byte("package x -1\n"),
		"truncated": buf.Bytes()[:buf.Len()-10],
	} {
		if _, err := ReadExport(bytes.NewReader(bad)); err == nil {
			t.Errorf("ReadExport(%s damaged) succeeded, want an error", name)
		}
	}
	if Public(Module+"/internal/x") || Public("example.com/other") || !Public(Module+"/pauli") {
		t.Error("Public misclassifies a path")
	}
}
