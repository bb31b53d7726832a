// Package apicheck keeps the record of the module's exported API and
// compares it with the code. The record is two files in testdata: api.txt,
// one line per exported identifier (a function with its signature, a type
// with each exported field or interface method, a method, a constant with
// its value, a variable with its type), which is what a reviewer reads; and
// api.export, the same packages as compiler export data, from which
// golang.org/x/exp/apidiff rebuilds the recorded API and classifies every
// difference from the code as compatible or incompatible.
//
// The test of this package fails when the code's API differs from the
// record in any way. Regenerate the record with
//
//	go test ./internal/apicheck -update
//
// and have the change of api.txt reviewed: an incompatible change (a
// removed or renamed identifier, a changed signature) breaks the programs
// that embed the library and must be deliberate.
package apicheck

import (
	"bufio"
	"bytes"
	"fmt"
	"go/token"
	"go/types"
	"io"
	"slices"
	"strconv"
	"strings"

	"golang.org/x/tools/go/gcexportdata"
	"golang.org/x/tools/go/packages"
)

// Module is the path of the module whose API is recorded.
const Module = "github.com/shotplan/shotplan"

// Load type-checks every package of the module that other modules can
// import (not internal, not a command), from the module root dir, sorted by
// import path. It also returns the Go files of the module's packages, so
// that a test can read them and so let go test's cache know what its result
// depends on.
func Load(dir string) ([]*types.Package, []string, error) {
	cfg := &packages.Config{Mode: packages.NeedName | packages.NeedTypes | packages.NeedFiles, Dir: dir}
	pkgs, err := packages.Load(cfg, Module+"/...")
	if err != nil {
		return nil, nil, err
	}
	var out []*types.Package
	var files []string
	for _, p := range pkgs {
		if len(p.Errors) > 0 {
			return nil, nil, fmt.Errorf("apicheck: loading %s: %v", p.PkgPath, p.Errors[0])
		}
		files = append(files, p.GoFiles...)
		if !Public(p.PkgPath) || p.Name == "main" {
			continue
		}
		out = append(out, p.Types)
	}
	slices.SortFunc(out, func(a, b *types.Package) int { return strings.Compare(a.Path(), b.Path()) })
	return out, files, nil
}

// Public reports whether other modules can import the package path: it is
// in the module and has no "internal" element.
func Public(path string) bool {
	if path != Module && !strings.HasPrefix(path, Module+"/") {
		return false
	}
	return !slices.Contains(strings.Split(path, "/"), "internal")
}

// WriteExport writes the packages as export data: for each, a line
// "package <path> <length>" and then length bytes of gcexportdata.
func WriteExport(w io.Writer, pkgs []*types.Package) error {
	for _, p := range pkgs {
		var buf bytes.Buffer
		// An empty file set: no source positions (which would record the
		// directory the record was made in).
		if err := gcexportdata.Write(&buf, token.NewFileSet(), p); err != nil {
			return fmt.Errorf("apicheck: export data of %s: %v", p.Path(), err)
		}
		if _, err := fmt.Fprintf(w, "package %s %d\n", p.Path(), buf.Len()); err != nil {
			return err
		}
		if _, err := w.Write(buf.Bytes()); err != nil {
			return err
		}
	}
	return nil
}

// ReadExport reads packages written by [WriteExport]. Each package is read
// into its own universe; apidiff matches types of other packages by path
// and name.
func ReadExport(r io.Reader) ([]*types.Package, error) {
	br := bufio.NewReader(r)
	var out []*types.Package
	for {
		line, err := br.ReadString('\n')
		if err == io.EOF && line == "" {
			return out, nil
		}
		if err != nil {
			return nil, fmt.Errorf("apicheck: export record: %v", err)
		}
		f := strings.Fields(line)
		if len(f) != 3 || f[0] != "package" {
			return nil, fmt.Errorf("apicheck: export record: bad header %q", strings.TrimSpace(line))
		}
		n, err := strconv.Atoi(f[2])
		if err != nil || n < 0 || n > 64<<20 {
			return nil, fmt.Errorf("apicheck: export record: bad length in %q", strings.TrimSpace(line))
		}
		data := make([]byte, n)
		if _, err := io.ReadFull(br, data); err != nil {
			return nil, fmt.Errorf("apicheck: export record of %s: %v", f[1], err)
		}
		p, err := gcexportdata.Read(bytes.NewReader(data), token.NewFileSet(), map[string]*types.Package{}, f[1])
		if err != nil {
			return nil, fmt.Errorf("apicheck: export record of %s: %v", f[1], err)
		}
		out = append(out, p)
	}
}

// Text renders the exported API of the packages, one sorted line per
// exported identifier, field, interface method or method, each starting
// with "pkg <path>, ".
func Text(pkgs []*types.Package) string {
	var lines []string
	for _, p := range pkgs {
		lines = append(lines, pkgLines(p)...)
	}
	slices.Sort(lines)
	return strings.Join(lines, "\n") + "\n"
}

func pkgLines(p *types.Package) []string {
	// Other packages by name, as Go code writes them.
	q := func(other *types.Package) string {
		if other == p {
			return ""
		}
		return other.Name()
	}
	prefix := "pkg " + p.Path() + ", "
	var lines []string
	add := func(format string, args ...any) { lines = append(lines, prefix+fmt.Sprintf(format, args...)) }
	scope := p.Scope()
	for _, name := range scope.Names() {
		obj := scope.Lookup(name)
		if !obj.Exported() {
			continue
		}
		switch obj := obj.(type) {
		case *types.Const:
			add("const %s %s = %s", name, types.TypeString(obj.Type(), q), obj.Val().ExactString())
		case *types.Var:
			add("var %s %s", name, types.TypeString(obj.Type(), q))
		case *types.Func:
			add("func %s%s", name, strings.TrimPrefix(types.TypeString(obj.Type(), q), "func"))
		case *types.TypeName:
			typeLines(add, obj, q)
		}
	}
	return lines
}

func typeLines(add func(string, ...any), obj *types.TypeName, q types.Qualifier) {
	name := obj.Name()
	if obj.IsAlias() {
		add("type %s = %s", name, types.TypeString(types.Unalias(obj.Type()), q))
		return
	}
	named, ok := obj.Type().(*types.Named)
	if !ok {
		add("type %s %s", name, types.TypeString(obj.Type(), q))
		return
	}
	if tp := named.TypeParams(); tp.Len() > 0 {
		var ps []string
		for i := range tp.Len() {
			ps = append(ps, tp.At(i).Obj().Name()+" "+types.TypeString(tp.At(i).Constraint(), q))
		}
		name += "[" + strings.Join(ps, ", ") + "]"
	}
	switch u := named.Underlying().(type) {
	case *types.Struct:
		add("type %s struct", name)
		for i := range u.NumFields() {
			f := u.Field(i)
			switch {
			case f.Embedded():
				add("type %s struct, embedded %s", name, types.TypeString(f.Type(), q))
			case f.Exported():
				add("type %s struct, %s %s", name, f.Name(), types.TypeString(f.Type(), q))
			}
		}
	case *types.Interface:
		add("type %s interface", name)
		for i := range u.NumEmbeddeds() {
			add("type %s interface, embedded %s", name, types.TypeString(u.EmbeddedType(i), q))
		}
		for i := range u.NumExplicitMethods() {
			m := u.ExplicitMethod(i)
			// Unexported methods matter too: they keep other packages from
			// implementing the interface.
			add("type %s interface, %s%s", name, m.Name(), strings.TrimPrefix(types.TypeString(m.Type(), q), "func"))
		}
		return
	default:
		add("type %s %s", name, types.TypeString(u, q))
	}
	for i := range named.NumMethods() {
		m := named.Method(i)
		if !m.Exported() {
			continue
		}
		sig := m.Type().(*types.Signature)
		recv := obj.Name()
		if _, ptr := sig.Recv().Type().(*types.Pointer); ptr {
			recv = "*" + recv
		}
		add("method (%s) %s%s", recv, m.Name(), strings.TrimPrefix(types.TypeString(sig, q), "func"))
	}
}
