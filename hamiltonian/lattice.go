package hamiltonian

import (
	"fmt"
	"math"
)

// Bond couples sites I and J of a [Graph] with a weight that multiplies the
// model's coupling constant, so that one graph carries per-bond couplings.
type Bond struct {
	I, J   int
	Weight float64
}

// Graph is a set of sites 0..Sites−1 (site q is qubit q) and the bonds
// between them: the graph a spin model lives on. [Line], [Ring], [Sheet] and
// [Torus] build the common ones with every bond weight 1; change
// Bonds[k].Weight for per-bond couplings, or list the bonds of any other
// graph by hand. A Graph is a plain value: the model builders read it and
// do not keep it.
type Graph struct {
	Sites int
	Bonds []Bond
}

// Line returns n sites in a row with bonds (i, i+1) in increasing i. A
// negative n gives a graph the model builders reject.
func Line(n int) Graph { return row(n, false) }

// Ring returns [Line](n) closed by the bond (n−1, 0) when n ≥ 3 (for n = 2
// the closing bond would repeat (0, 1), so Ring(2) is Line(2)). A negative n
// gives a graph the model builders reject.
func Ring(n int) Graph { return row(n, true) }

func row(n int, closed bool) Graph {
	l := Graph{Sites: n}
	for i := 0; i+1 < n; i++ {
		l.Bonds = append(l.Bonds, Bond{I: i, J: i + 1, Weight: 1})
	}
	if closed && n >= 3 {
		l.Bonds = append(l.Bonds, Bond{I: n - 1, J: 0, Weight: 1})
	}
	return l
}

// Sheet returns the rows×cols square grid with open edges, site r·cols + c
// at row r, column c. Bonds come site by site: the bond to the right
// neighbour, then the bond to the neighbour below. A negative size gives a
// graph the model builders reject.
func Sheet(rows, cols int) Graph { return grid(rows, cols, false) }

// Torus returns [Sheet](rows, cols) with rows and columns wrapped around
// where they have at least 3 sites (a wrap on 2 sites would repeat a bond),
// in the same site-by-site order. Torus(1, n) is Ring(n). A negative size
// gives a graph the model builders reject.
func Torus(rows, cols int) Graph { return grid(rows, cols, true) }

func grid(rows, cols int, wrap bool) Graph {
	if rows < 0 || cols < 0 {
		return Graph{Sites: -1}
	}
	l := Graph{Sites: rows * cols}
	for r := range rows {
		for c := range cols {
			s := r*cols + c
			switch {
			case c+1 < cols:
				l.Bonds = append(l.Bonds, Bond{I: s, J: s + 1, Weight: 1})
			case wrap && cols >= 3:
				l.Bonds = append(l.Bonds, Bond{I: s, J: r * cols, Weight: 1})
			}
			switch {
			case r+1 < rows:
				l.Bonds = append(l.Bonds, Bond{I: s, J: s + cols, Weight: 1})
			case wrap && rows >= 3:
				l.Bonds = append(l.Bonds, Bond{I: s, J: c, Weight: 1})
			}
		}
	}
	return l
}

// Validate reports the first problem with l: a negative site count, a bond
// naming a site out of range or the same site twice, or a non-finite weight.
func (l Graph) Validate() error {
	if l.Sites < 0 {
		return fmt.Errorf("hamiltonian: graph has a negative site count %d", l.Sites)
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
