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
// ReadFCIDUMP(WriteFCIDUMP(g)) equals g.
func WriteFCIDUMP(w io.Writer, g *Integrals) error {
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
	fmt.Fprintf(bw, "ISYM=%d,\n&END\n", g.ISym)
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
