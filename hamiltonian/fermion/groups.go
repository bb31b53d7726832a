package fermion

import (
	"bytes"
)

// groups collects the products of an operator before mapping. Each product
// in the form "creators, then annihilators" is sorted with the sign of the
// permutation (creators by increasing mode, annihilators by decreasing
// mode; a repeated mode makes it vanish), so that products equal by the
// anticommutation of distinct modes share one entry. A product R and its
// adjoint R† share an entry too: the one with the smaller key is kept, with
// weight u for occurrences of R and w for occurrences of R†. Products in any
// other order are kept as written.
type groups struct {
	index   map[string]int32
	ops     []Op
	end     []int
	u, w    []complex128
	key     []byte
	adjKey  []byte
	scratch []Op
	adj     []Op
}

func newGroups(capTerms int) *groups {
	return &groups{index: make(map[string]int32, capTerms/2)}
}

func (g *groups) product(i int) []Op {
	start := 0
	if i > 0 {
		start = g.end[i-1]
	}
	return g.ops[start:g.end[i]]
}

func (g *groups) add(c complex128, ops []Op) {
	if c == 0 {
		return
	}
	p := append(g.scratch[:0], ops...)
	g.scratch = p
	if sign, ok := sortProduct(p); !ok {
		return // a repeated creator or annihilator: the product is zero
	} else if sign < 0 {
		c = -c
	}
	g.adj = g.adj[:0]
	for k := len(p) - 1; k >= 0; k-- {
		g.adj = append(g.adj, p[k].Adjoint())
	}
	g.key = opsKey(g.key[:0], p)
	g.adjKey = opsKey(g.adjKey[:0], g.adj)
	dagger := bytes.Compare(g.adjKey, g.key) < 0
	key, rep := g.key, p
	if dagger {
		key, rep = g.adjKey, g.adj
	}
	i, ok := g.index[string(key)]
	if !ok {
		i = int32(len(g.u))
		g.index[string(key)] = i
		g.ops = append(g.ops, rep...)
		g.end = append(g.end, len(g.ops))
		g.u = append(g.u, 0)
		g.w = append(g.w, 0)
	}
	if dagger {
		g.w[i] += c
	} else {
		g.u[i] += c
	}
}

// sortProduct sorts a product whose creators all stand left of its
// annihilators into normal order in place and returns the sign of the
// permutation; ok is false if a mode repeats among the creators or among the
// annihilators (the product is zero). Any other product is left as written
// with sign +1.
func sortProduct(p []Op) (sign int, ok bool) {
	split := 0
	for split < len(p) && p[split].Dagger {
		split++
	}
	for _, op := range p[split:] {
		if op.Dagger {
			return 1, true
		}
	}
	sign = 1
	for _, part := range [][]Op{p[:split], p[split:]} {
		// Insertion sort, counting transpositions; products are short.
		for i := 1; i < len(part); i++ {
			for j := i; j > 0 && before(part[j], part[j-1]); j-- {
				part[j], part[j-1] = part[j-1], part[j]
				sign = -sign
			}
		}
		for i := 1; i < len(part); i++ {
			if part[i] == part[i-1] {
				return 0, false
			}
		}
	}
	return sign, true
}
