package molecule

import (
	"bufio"
	"fmt"
	"io"
	"strconv"

	"github.com/shotplan/shotplan/internal/atomicfile"
)

// WriteFCIDUMP writes g in the FCIDUMP format read by [ReadFCIDUMP]: a
// header with one item per line, then each distinct non-zero two-electron
// integral once (i ≥ j, k ≥ l, ij ≥ kl), the non-zero one-electron integrals
// of the lower triangle, and the constant. Values are printed with the
// shortest decimal that reads back to the same float64, so
// ReadFCIDUMP(WriteFCIDUMP(g)) equals g — except that an unset ISym (0, as
// [New] leaves it) is not written and reads back as 1, the reader's
// default. It returns an error, writing nothing, for a header the reader
// would refuse: Electrons outside 0..2·Orbitals, a SpinTwice of the wrong
// parity or with more α or β electrons than orbitals, an ISym that is not
// an irrep label 1 to 8 (or 0), an OrbSym label outside 1..8 or an OrbSym
// of another length than the orbital count.
func WriteFCIDUMP(w io.Writer, g *Integrals) error {
	if err := g.checkHeader(); err != nil {
		return fmt.Errorf("molecule: WriteFCIDUMP: %w", err)
	}
	bw := bufio.NewWriter(w)
	n := g.norb
	fmt.Fprintf(bw, "&FCI\nNORB=%d,\nNELEC=%d,\nMS2=%d,\nUHF=.FALSE.,\n", n, g.Electrons, g.SpinTwice)
	if g.OrbSym != nil {
		bw.WriteString("ORBSYM=")
		for _, s := range g.OrbSym {
			bw.WriteString(strconv.Itoa(s))
			bw.WriteByte(',')
		}
		bw.WriteByte('\n')
	}
	if g.ISym != 0 {
		fmt.Fprintf(bw, "ISYM=%d,\n", g.ISym)
	}
	bw.WriteString("&END\n")
	var buf []byte
	line := func(v float64, i, j, k, l int) {
		buf = strconv.AppendFloat(buf[:0], v, 'e', -1, 64)
		for _, x := range [4]int{i, j, k, l} {
			buf = append(buf, ' ')
			buf = strconv.AppendInt(buf, int64(x), 10)
		}
		buf = append(buf, '\n')
		bw.Write(buf)
	}
	for p := range n {
		for q := range p + 1 {
			for r := range p + 1 {
				for s := range r + 1 {
					if pair(r, s) > pair(p, q) {
						continue
					}
					if v := g.Two(p, q, r, s); v != 0 {
						line(v, p+1, q+1, r+1, s+1)
					}
				}
			}
		}
	}
	for p := range n {
		for q := range p + 1 {
			if v := g.One(p, q); v != 0 {
				line(v, p+1, q+1, 0, 0)
			}
		}
	}
	line(g.core, 0, 0, 0, 0)
	return bw.Flush()
}

// WriteFCIDUMPFile writes g to path in the FCIDUMP format, atomically.
func WriteFCIDUMPFile(path string, g *Integrals) error {
	return atomicfile.Write(path, func(w io.Writer) error { return WriteFCIDUMP(w, g) })
}

// checkHeader returns an error for exported fields that ReadFCIDUMP would
// refuse in a header.
func (g *Integrals) checkHeader() error {
	n := g.norb
	if g.Electrons < 0 || g.Electrons > 2*n {
		return fmt.Errorf("the electron count (Electrons) is %d, want 0 to %d (twice the orbitals)", g.Electrons, 2*n)
	}
	alpha, beta := (g.Electrons+g.SpinTwice)/2, (g.Electrons-g.SpinTwice)/2
	if (g.Electrons+g.SpinTwice)%2 != 0 || alpha < 0 || beta < 0 || alpha > n || beta > n {
		return fmt.Errorf("2S_z (SpinTwice) is %d with %d electrons: want the same parity and at most %d α and β electrons each", g.SpinTwice, g.Electrons, n)
	}
	if g.ISym < 0 || g.ISym > 8 {
		return fmt.Errorf("the target irrep (ISym) is %d, want a label 1 to 8 (or 0, unset)", g.ISym)
	}
	if g.OrbSym != nil && len(g.OrbSym) != n {
		return fmt.Errorf("the orbital irreps (OrbSym) are %d labels for %d orbitals", len(g.OrbSym), n)
	}
	for p, s := range g.OrbSym {
		if s < 1 || s > 8 {
			return fmt.Errorf("the irrep of orbital %d (OrbSym) is %d, want a label 1 to 8", p, s)
		}
	}
	return nil
}
