package hamiltonian

import (
	"fmt"
	"math"
)

// Bond couples sites I and J of a [Lattice] with a weight that multiplies the
// model's coupling constant, so that one lattice carries per-bond couplings.
type Bond struct {
	I, J   int
	Weight float64
}

// Lattice is a set of sites 0..Sites−1 (site q is qubit q) and the bonds
// between them. The constructors give every bond weight 1; change Bonds[k].Weight
// for per-bond couplings. A Lattice is a plain value: the model builders read
// it and do not keep it.
type Lattice struct {
	Sites int
	Bonds []Bond
}

// Chain returns the chain of n sites with bonds (i, i+1) in increasing i. If
// periodic, the closing bond (n−1, 0) is added when n ≥ 3 (for n = 2 it
// would repeat the bond (0, 1)). A negative n gives a lattice the model
// builders reject.
func Chain(n int, periodic bool) Lattice {
	l := Lattice{Sites: n}
	for i := 0; i+1 < n; i++ {
		l.Bonds = append(l.Bonds, Bond{I: i, J: i + 1, Weight: 1})
	}
	if periodic && n >= 3 {
		l.Bonds = append(l.Bonds, Bond{I: n - 1, J: 0, Weight: 1})
	}
	return l
}

// Rectangle returns the rows×cols square lattice with site r·cols + c at row
// r, column c. Bonds come row by row: for each site, the bond to its right
// neighbour, then the bond to the neighbour below. If periodic, rows and
// columns wrap around where they have at least 3 sites (a wrap on 2 sites
// would repeat a bond). A negative size gives a lattice the model builders
// reject.
func Rectangle(rows, cols int, periodic bool) Lattice {
	if rows < 0 || cols < 0 {
		return Lattice{Sites: -1}
	}
	l := Lattice{Sites: rows * cols}
	for r := range rows {
		for c := range cols {
			s := r*cols + c
			switch {
			case c+1 < cols:
				l.Bonds = append(l.Bonds, Bond{I: s, J: s + 1, Weight: 1})
			case periodic && cols >= 3:
				l.Bonds = append(l.Bonds, Bond{I: s, J: r * cols, Weight: 1})
			}
			switch {
			case r+1 < rows:
				l.Bonds = append(l.Bonds, Bond{I: s, J: s + cols, Weight: 1})
			case periodic && rows >= 3:
				l.Bonds = append(l.Bonds, Bond{I: s, J: c, Weight: 1})
			}
		}
	}
	return l
}

// Validate reports the first problem with l: a negative site count, a bond
// naming a site out of range or the same site twice, or a non-finite weight.
func (l Lattice) Validate() error {
	if l.Sites < 0 {
		return fmt.Errorf("hamiltonian: lattice has a negative site count %d", l.Sites)
	}
	for k, b := range l.Bonds {
		if b.I < 0 || b.I >= l.Sites || b.J < 0 || b.J >= l.Sites {
			return fmt.Errorf("hamiltonian: bond %d (%d, %d): site out of range [0, %d)", k, b.I, b.J, l.Sites)
		}
		if b.I == b.J {
			return fmt.Errorf("hamiltonian: bond %d (%d, %d) joins a site to itself", k, b.I, b.J)
		}
		if math.IsNaN(b.Weight) || math.IsInf(b.Weight, 0) {
			return fmt.Errorf("hamiltonian: bond %d (%d, %d): weight %v is not finite", k, b.I, b.J, b.Weight)
		}
	}
	return nil
}
