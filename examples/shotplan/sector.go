package main

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/internal/atomicfile"
)

// isFCIDUMP reports whether the file at path starts (after white space) with
// the "&FCI" header of an FCIDUMP file.
func isFCIDUMP(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	buf := make([]byte, 512)
	n, _ := io.ReadFull(f, buf)
	s := bytes.TrimLeft(buf[:n], " \t\r\n")
	return len(s) >= 4 && strings.EqualFold(string(s[:4]), "&FCI")
}

// readHamAny reads a Hamiltonian file, or an FCIDUMP file mapped with the
// Jordan–Wigner encoding (spin orbitals interleaved α, β), in which case the
// integrals are returned too.
func readHamAny(path string) (*hamiltonian.Hamiltonian, *molecule.Integrals, error) {
	if !isFCIDUMP(path) {
		h, err := hamiltonian.ReadFile(path)
		return h, nil, err
	}
	g, err := molecule.ReadFCIDUMPFile(path)
	if err != nil {
		return nil, nil, err
	}
	h, err := g.QubitHamiltonian(fermion.JordanWigner)
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	return h, g, nil
}

// sectorFlags holds -electrons and -spin of info and simulate.
type sectorFlags struct {
	electrons, spin *string
}

func addSectorFlags(fs *flag.FlagSet) sectorFlags {
	return sectorFlags{
		electrons: fs.String("electrons", "", "exact ground state among states of this many electrons (spin orbitals interleaved α, β, Jordan–Wigner); \"all\" for every electron number (default: NELEC of an FCIDUMP, else all)"),
		spin:      fs.String("spin", "", "2S_z, the number of α minus β electrons, with -electrons (default: MS2 of an FCIDUMP, else electrons mod 2, which holds the lowest state of every spin)"),
	}
}

// chosenSector is the sector picked by the flags; electrons < 0 means the
// whole space.
type chosenSector struct {
	electrons, spinTwice int
	sector               *hamiltonian.Sector
}

func (c chosenSector) String() string {
	if c.sector == nil {
		return "whole space"
	}
	return fmt.Sprintf("%s, 2S_z = %d", plural(c.electrons, "electron"), c.spinTwice)
}

// resolve picks the sector from the flags, the FCIDUMP integrals g (nil for
// a Hamiltonian file) and the number of qubits.
func (sf sectorFlags) resolve(qubits int, g *molecule.Integrals) (chosenSector, error) {
	el, sp := strings.TrimSpace(*sf.electrons), strings.TrimSpace(*sf.spin)
	none := chosenSector{electrons: -1}
	if el == "all" {
		if sp != "" {
			return none, badf("-spin %s needs a number of electrons, not -electrons all", sp)
		}
		return none, nil
	}
	var n, ms2 int
	switch {
	case el != "":
		v, err := strconv.Atoi(el)
		if err != nil {
			return none, badf("-electrons %q: want a whole number or \"all\"", el)
		}
		n = v
		switch {
		case sp != "":
		case g != nil && g.Electrons == n:
			ms2 = g.SpinTwice
		default:
			ms2 = ((n % 2) + 2) % 2
		}
	case g != nil:
		n, ms2 = g.Electrons, g.SpinTwice
	case sp != "":
		return none, badf("-spin needs -electrons (or an FCIDUMP file, whose NELEC is used)")
	default:
		return none, nil
	}
	if sp != "" {
		v, err := strconv.Atoi(sp)
		if err != nil {
			return none, badf("-spin %q: want a whole number (2S_z)", sp)
		}
		ms2 = v
	}
	s, err := hamiltonian.ElectronSector(qubits, n, ms2)
	if err != nil {
		return none, badf("-electrons %d -spin %d: %w", n, ms2, err)
	}
	return chosenSector{electrons: n, spinTwice: ms2, sector: &s}, nil
}

// groundState finds the ground state of h in the chosen sector.
func groundState(h *hamiltonian.Hamiltonian, c chosenSector) (hamiltonian.Eigenpair, error) {
	return hamiltonian.GroundState(h, &hamiltonian.EigenOptions{Sector: c.sector})
}

// A state file keeps a ground state between runs of simulate. It is a text
// header, one item per line,
//
//	shotplan state 1
//	qubits N
//	hamiltonian SHA256 (of the Hamiltonian's terms, see fingerprint)
//	sector ELECTRONS SPIN_TWICE   (or "sector all")
//	energy E
//	residual R
//	amplitudes K
//
// followed by K binary records of 24 bytes, little-endian: the basis-state
// index (uint64) and the real and imaginary parts (float64) of each
// non-zero amplitude, in increasing index order.
const stateMagic = "shotplan state 1"

// fingerprint hashes the qubit count, offset and terms of h (exact bits of
// every coefficient), so a state file is used only with its Hamiltonian.
func fingerprint(h *hamiltonian.Hamiltonian) string {
	d := sha256.New()
	var b [8]byte
	binary.LittleEndian.PutUint64(b[:], uint64(h.Qubits()))
	d.Write(b[:])
	binary.LittleEndian.PutUint64(b[:], math.Float64bits(h.Offset()))
	d.Write(b[:])
	for _, t := range h.Terms() {
		io.WriteString(d, t.Pauli.String())
		binary.LittleEndian.PutUint64(b[:], math.Float64bits(t.Coeff))
		d.Write(b[:])
	}
	return hex.EncodeToString(d.Sum(nil))
}

func (c chosenSector) field() string {
	if c.sector == nil {
		return "all"
	}
	return fmt.Sprintf("%d %d", c.electrons, c.spinTwice)
}

// writeState writes g atomically to path.
func writeState(path string, h *hamiltonian.Hamiltonian, c chosenSector, g hamiltonian.Eigenpair) error {
	if fi, err := os.Lstat(path); err == nil && !fi.Mode().IsRegular() {
		return fmt.Errorf("%s: not a regular file", path)
	}
	k := 0
	for _, v := range g.State {
		if v != 0 {
			k++
		}
	}
	return atomicfile.Write(path, func(w io.Writer) error {
		fmt.Fprintf(w, "%s\nqubits %d\nhamiltonian %s\nsector %s\nenergy %s\nresidual %s\namplitudes %d\n",
			stateMagic, h.Qubits(), fingerprint(h), c.field(),
			strconv.FormatFloat(g.Energy, 'g', -1, 64), strconv.FormatFloat(g.Residual, 'g', -1, 64), k)
		var rec [24]byte
		for a, v := range g.State {
			if v == 0 {
				continue
			}
			binary.LittleEndian.PutUint64(rec[0:], uint64(a))
			binary.LittleEndian.PutUint64(rec[8:], math.Float64bits(real(v)))
			binary.LittleEndian.PutUint64(rec[16:], math.Float64bits(imag(v)))
			if _, err := w.Write(rec[:]); err != nil {
				return err
			}
		}
		return nil
	})
}

var errStateFormat = errors.New("not a state file of this program")

// readState reads a state file written by writeState for h and the sector c.
// It reads at most the header and 2^qubits records.
func readState(path string, h *hamiltonian.Hamiltonian, c chosenSector) (hamiltonian.Eigenpair, error) {
	var g hamiltonian.Eigenpair
	f, err := os.Open(path)
	if err != nil {
		return g, err
	}
	defer f.Close()
	r := bufio.NewReader(io.LimitReader(f, 1<<20+24<<hamiltonian.MaxExactQubits))
	want := []string{stateMagic, "qubits", "hamiltonian", "sector", "energy", "residual", "amplitudes"}
	vals := make([]string, len(want))
	for i, key := range want {
		line, err := r.ReadString('\n')
		if err != nil || len(line) > 200 {
			return g, fmt.Errorf("%s: line %d: %w", path, i+1, errStateFormat)
		}
		line = strings.TrimSuffix(line, "\n")
		if i == 0 {
			if line != stateMagic {
				return g, fmt.Errorf("%s: line 1: %w", path, errStateFormat)
			}
			continue
		}
		v, ok := strings.CutPrefix(line, key+" ")
		if !ok {
			return g, fmt.Errorf("%s: line %d: want %q, got %.40q", path, i+1, key, line)
		}
		vals[i] = v
	}
	if vals[1] != strconv.Itoa(h.Qubits()) || vals[2] != fingerprint(h) {
		return g, fmt.Errorf("%s: the state was computed for another Hamiltonian (%s qubits); remove the file to compute it again", path, vals[1])
	}
	if vals[3] != c.field() {
		return g, fmt.Errorf("%s: the state is for sector %q, not %q; remove the file or use another one", path, vals[3], c.field())
	}
	if g.Energy, err = strconv.ParseFloat(vals[4], 64); err != nil {
		return g, fmt.Errorf("%s: line 5: energy %.40q", path, vals[4])
	}
	if g.Residual, err = strconv.ParseFloat(vals[5], 64); err != nil {
		return g, fmt.Errorf("%s: line 6: residual %.40q", path, vals[5])
	}
	dim := 1 << h.Qubits()
	k, err := strconv.Atoi(vals[6])
	if err != nil || k < 1 || k > dim {
		return g, fmt.Errorf("%s: line 7: amplitude count %.40q, want 1 to %d", path, vals[6], dim)
	}
	g.State = make([]complex128, dim)
	var rec [24]byte
	last := -1
	for i := range k {
		if _, err := io.ReadFull(r, rec[:]); err != nil {
			return g, fmt.Errorf("%s: amplitude %d of %d: %w", path, i+1, k, err)
		}
		a := binary.LittleEndian.Uint64(rec[0:])
		re := math.Float64frombits(binary.LittleEndian.Uint64(rec[8:]))
		im := math.Float64frombits(binary.LittleEndian.Uint64(rec[16:]))
		if a >= uint64(dim) || int(a) <= last || math.IsNaN(re+im) || math.IsInf(re+im, 0) {
			return g, fmt.Errorf("%s: amplitude %d of %d: index %d or value (%g, %g) out of order or range", path, i+1, k, a, re, im)
		}
		last = int(a)
		g.State[a] = complex(re, im)
	}
	if _, err := r.ReadByte(); err != io.EOF {
		return g, fmt.Errorf("%s: data after the last amplitude", path)
	}
	return g, nil
}
