package hamiltoniantest

import (
	"bytes"
	"embed"
	"encoding/json"
	"fmt"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/pauli"
)

//go:embed *.fcidump *.json
var files embed.FS

// The molecules, by the base names of their FCIDUMP files (README.md in
// this package's directory names their source).
const (
	H2     = "h2_sto3g_0.74A"    // H2, R = 0.74 Å, 4 spin orbitals
	H2Alt  = "h2_sto3g_0.7414A"  // H2, R = 0.7414 Å
	H2Bohr = "h2_sto3g_1.4bohr"  // H2, R = 1.4 bohr (Szabo & Ostlund geometry)
	LiH    = "lih_sto3g_1.5949A" // LiH, R = 1.5949 Å, 12 spin orbitals
	H2O    = "h2o_sto3g"         // H2O, 14 spin orbitals
	BeH2   = "beh2_sto3g_1.326A" // BeH2, linear, R = 1.326 Å, 14 spin orbitals
	NH3    = "nh3_sto3g"         // NH3, 16 spin orbitals
	jsonH2 = "h2_qubit_hamiltonians.json"
)

// jsonFCI names the files of energies, each keyed by molecule name.
var jsonFCI = []string{"energies.json", "energies_beh2_nh3.json"}

// Molecules lists the names of the embedded molecules.
var Molecules = []string{H2, H2Alt, H2Bohr, LiH, H2O, BeH2, NH3}

// FCIDUMP returns the bytes of the named molecule's FCIDUMP file.
func FCIDUMP(name string) ([]byte, error) {
	return files.ReadFile(name + ".fcidump")
}

// Molecule reads the named molecule's integrals and maps them to a qubit
// Hamiltonian under enc (spin orbitals interleaved α, β).
func Molecule(name string, enc fermion.Encoding) (*hamiltonian.Hamiltonian, error) {
	b, err := FCIDUMP(name)
	if err != nil {
		return nil, err
	}
	g, err := molecule.ReadFCIDUMP(bytes.NewReader(b))
	if err != nil {
		return nil, fmt.Errorf("hamiltoniantest: %s: %w", name, err)
	}
	return g.QubitHamiltonian(enc)
}

// FullCI returns the named molecule's full-CI energy in hartree (psi4 1.3.2,
// energies.json or energies_beh2_nh3.json); for these molecules it is the
// lowest eigenvalue of the whole qubit Hamiltonian.
func FullCI(name string) (float64, error) {
	for _, file := range jsonFCI {
		b, err := files.ReadFile(file)
		if err != nil {
			return 0, err
		}
		var all map[string]json.RawMessage
		if err := json.Unmarshal(b, &all); err != nil {
			return 0, fmt.Errorf("hamiltoniantest: %s: %w", file, err)
		}
		raw, ok := all[name]
		if !ok {
			continue
		}
		var e struct {
			FCI *float64 `json:"E_FCI"`
		}
		if err := json.Unmarshal(raw, &e); err != nil || e.FCI == nil {
			return 0, fmt.Errorf("hamiltoniantest: %s: no full-CI energy for %q", file, name)
		}
		return *e.FCI, nil
	}
	return 0, fmt.Errorf("hamiltoniantest: no full-CI energy for %q", name)
}

// H2Qubit returns the 15-term H2 qubit Hamiltonian of h2_qubit_hamiltonians.json
// for a molecule name (H2, H2Alt or H2Bohr) and an encoding key ("jw", "bk"
// or "parity"), with its terms in sorted order, and the file's lowest
// eigenvalue.
func H2Qubit(name, encoding string) (*hamiltonian.Hamiltonian, float64, error) {
	b, err := files.ReadFile(jsonH2)
	if err != nil {
		return nil, 0, err
	}
	var all map[string]json.RawMessage
	if err := json.Unmarshal(b, &all); err != nil {
		return nil, 0, err
	}
	var mol map[string]json.RawMessage
	if err := json.Unmarshal(all[name], &mol); err != nil || mol == nil {
		return nil, 0, fmt.Errorf("hamiltoniantest: no H2 Hamiltonians for %q", name)
	}
	var coeffs map[string]float64
	var lowest float64
	if err := json.Unmarshal(mol[encoding], &coeffs); err != nil || coeffs == nil {
		return nil, 0, fmt.Errorf("hamiltoniantest: no %q Hamiltonian for %q", encoding, name)
	}
	if err := json.Unmarshal(mol[encoding+"_lowest_eigenvalue"], &lowest); err != nil {
		return nil, 0, fmt.Errorf("hamiltoniantest: no lowest eigenvalue for %q %q", name, encoding)
	}
	keys := make([]string, 0, len(coeffs))
	for k := range coeffs {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	terms := make([]hamiltonian.Term, 0, len(keys))
	for _, k := range keys {
		p, err := pauli.Parse(k)
		if err != nil {
			return nil, 0, fmt.Errorf("hamiltoniantest: %s: %w", name, err)
		}
		terms = append(terms, hamiltonian.Term{Pauli: p, Coeff: coeffs[k]})
	}
	h, err := hamiltonian.New(4, 0, terms)
	return h, lowest, err
}
