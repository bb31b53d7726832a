package allocate_test

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
)

// TestNilProxyUnchanged pins the plans of the grouping strategies without
// a proxy on two molecules, so that adding proxies left them bit for bit
// as they were: the hashes were recorded with the code before proxies
// existed (the commit that added allocate.Proxy). The plan hashed is every
// setting with its shots, then every cover count.
func TestNilProxyUnchanged(t *testing.T) {
	want := map[string]string{
		"lih_sto3g_1.5949A jw sorted":    "83781d3b5cc677faabed198280386a3fcfaf42ed69eda05aee492a1e4cc19119",
		"lih_sto3g_1.5949A jw sorted-gc": "8486f52208b7412170ad7d202d01e0e8bd7ad3a8a1f210426479bea4bf8e61b4",
		"lih_sto3g_1.5949A jw color-gc":  "46002cdc687a4e6304102173c99b96866c38639363bb793f95c7fe703a75ed2c",
		"h2o_sto3g bk sorted":            "1c091b96a3a0bfb21929229f737e8b30df246e612a36f1cc0ac96ad70b039327",
		"h2o_sto3g bk sorted-gc":         "a22fdfd9f070259ee242791129528f95c0d2e5a17b3a37f6c21e5c1b8c4cabab",
		"h2o_sto3g bk color-gc":          "b7f9cdb9eaa9f6ab1ac1acd8f4a24bd7ef3957fe0eff3f06a482492a24deb11b",
	}
	for _, mol := range []struct {
		name string
		enc  fermion.Encoding
	}{{hamiltoniantest.LiH, fermion.JordanWigner}, {hamiltoniantest.H2O, fermion.BravyiKitaev}} {
		h, err := hamiltoniantest.Molecule(mol.name, mol.enc)
		if err != nil {
			t.Fatal(err)
		}
		for _, name := range []string{"sorted", "sorted-gc", "color-gc"} {
			a, err := allocate.ByName(name, 1)
			if err != nil {
				t.Fatal(err)
			}
			p, err := allocate.Run(h, 100003, a, nil)
			if err != nil {
				t.Fatal(err)
			}
			d := sha256.New()
			for k, s := range p.Settings {
				fmt.Fprintf(d, "%s %d\n", s, p.Shots[k])
			}
			fmt.Fprintf(d, "%v\n", p.Cover)
			key := fmt.Sprintf("%s %s %s", mol.name, mol.enc, name)
			if got := hex.EncodeToString(d.Sum(nil)); got != want[key] {
				t.Errorf("%s: plan hash %s, want %s", key, got, want[key])
			}
		}
	}
}
