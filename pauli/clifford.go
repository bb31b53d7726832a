package pauli

import (
	"strconv"
	"strings"
)

// GateKind names one of the Clifford gates a [Circuit] holds. The zero value
// is not a gate.
type GateKind uint8

// The Clifford gates. Their matrices are those of Nielsen & Chuang, Quantum
// Computation and Quantum Information, §4.2 and §4.3: H = (X+Z)/√2,
// S = diag(1, i), CNOT flips the target when the control is 1, CZ = diag(1, 1,
// 1, −1).
const (
	GateH    GateKind = iota + 1 // Hadamard
	GateS                        // phase gate diag(1, i)
	GateSdg                      // S†, diag(1, −i)
	GateCNOT                     // controlled-NOT; [Gate.Q0] is the control, [Gate.Q1] the target
	GateCZ                       // controlled-Z, symmetric in its two qubits
)

// String returns "H", "S", "Sdg", "CNOT" or "CZ", or "?" for an invalid kind.
func (k GateKind) String() string {
	switch k {
	case GateH:
		return "H"
	case GateS:
		return "S"
	case GateSdg:
		return "Sdg"
	case GateCNOT:
		return "CNOT"
	case GateCZ:
		return "CZ"
	}
	return "?"
}

// TwoQubit reports whether k acts on two qubits.
func (k GateKind) TwoQubit() bool { return k == GateCNOT || k == GateCZ }

// Gate is one Clifford gate on named qubits. Gates are comparable with ==;
// the helpers of [Circuit] keep Q1 zero for one-qubit gates so that equal
// gates compare equal.
type Gate struct {
	Kind GateKind
	Q0   int // the qubit of a one-qubit gate, the control of CNOT, the first qubit of CZ
	Q1   int // the target of CNOT, the second qubit of CZ; zero for one-qubit gates
}

// String returns the text form of g, such as "H(3)" or "CNOT(0,2)".
func (g Gate) String() string { return string(g.AppendText(nil)) }

// AppendText appends the text form of g to b.
func (g Gate) AppendText(b []byte) []byte {
	b = append(b, g.Kind.String()...)
	b = append(b, '(')
	b = strconv.AppendInt(b, int64(g.Q0), 10)
	if g.Kind.TwoQubit() {
		b = append(b, ',')
		b = strconv.AppendInt(b, int64(g.Q1), 10)
	}
	return append(b, ')')
}

// inverse returns the gate g†.
func (g Gate) inverse() Gate {
	switch g.Kind {
	case GateS:
		g.Kind = GateSdg
	case GateSdg:
		g.Kind = GateS
	}
	return g
}

// Circuit is a Clifford circuit of H, S, S†, CNOT and CZ gates on a fixed
// number of qubits, applied in order: the circuit g₁ g₂ … g_k is the unitary
// U = g_k ⋯ g₂ g₁.
//
// A Circuit is built through a pointer: [NewCircuit], then the append helpers
// ([Circuit.H], [Circuit.CNOT], ...), which modify the receiver and return it
// for chaining. No other method modifies it. A struct copy shares the gate
// list, so append only to the original; use [Circuit.Clone] for an
// independent copy.
type Circuit struct {
	n     int
	gates []Gate
}

// NewCircuit returns an empty circuit (the identity) on n qubits. It panics
// if n < 0.
func NewCircuit(n int) *Circuit {
	if n < 0 {
		panic("pauli: negative qubit count")
	}
	return &Circuit{n: n}
}

// Qubits returns the number of qubits.
func (c *Circuit) Qubits() int { return c.n }

// Len returns the number of gates.
func (c *Circuit) Len() int { return len(c.gates) }

// At returns gate i. It panics if i is out of range.
func (c *Circuit) At(i int) Gate { return c.gates[i] }

// Gates returns the gates in order of application. The slice aliases the
// circuit and must not be modified.
func (c *Circuit) Gates() []Gate { return c.gates[:len(c.gates):len(c.gates)] }

// Append appends gates in order and returns c. It panics if a gate has an
// invalid kind, a qubit outside [0, n), or the same qubit twice.
func (c *Circuit) Append(gs ...Gate) *Circuit {
	for _, g := range gs {
		c.gates = append(c.gates, c.valid(g))
	}
	return c
}

// H appends a Hadamard gate on qubit q and returns c.
func (c *Circuit) H(q int) *Circuit { return c.Append(Gate{Kind: GateH, Q0: q}) }

// S appends the phase gate S on qubit q and returns c.
func (c *Circuit) S(q int) *Circuit { return c.Append(Gate{Kind: GateS, Q0: q}) }

// Sdg appends S† on qubit q and returns c.
func (c *Circuit) Sdg(q int) *Circuit { return c.Append(Gate{Kind: GateSdg, Q0: q}) }

// CNOT appends a controlled-NOT with the given control and target and
// returns c.
func (c *Circuit) CNOT(control, target int) *Circuit {
	return c.Append(Gate{Kind: GateCNOT, Q0: control, Q1: target})
}

// CZ appends a controlled-Z on qubits a and b and returns c.
func (c *Circuit) CZ(a, b int) *Circuit { return c.Append(Gate{Kind: GateCZ, Q0: a, Q1: b}) }

// valid returns g with Q1 cleared for one-qubit gates, or panics.
func (c *Circuit) valid(g Gate) Gate {
	if g.Kind < GateH || g.Kind > GateCZ {
		panic("pauli: invalid gate kind")
	}
	if g.Q0 < 0 || g.Q0 >= c.n {
		panic("pauli: gate qubit out of range")
	}
	if !g.Kind.TwoQubit() {
		g.Q1 = 0
		return g
	}
	if g.Q1 < 0 || g.Q1 >= c.n {
		panic("pauli: gate qubit out of range")
	}
	if g.Q0 == g.Q1 {
		panic("pauli: two-qubit gate on a single qubit")
	}
	return g
}

// TwoQubitGates returns the number of CNOT and CZ gates.
func (c *Circuit) TwoQubitGates() int {
	k := 0
	for _, g := range c.gates {
		if g.Kind.TwoQubit() {
			k++
		}
	}
	return k
}

// Depth returns the number of layers when every gate is placed, in order,
// in the earliest layer after the last gate on any of its qubits (a greedy
// as-soon-as-possible schedule). The empty circuit has depth 0.
func (c *Circuit) Depth() int {
	if len(c.gates) == 0 {
		return 0
	}
	layer := make([]int, c.n) // the last occupied layer of each qubit
	d := 0
	for _, g := range c.gates {
		l := layer[g.Q0]
		if g.Kind.TwoQubit() {
			l = max(l, layer[g.Q1])
			layer[g.Q1] = l + 1
		}
		layer[g.Q0] = l + 1
		d = max(d, l+1)
	}
	return d
}

// Clone returns a copy of c that shares no storage with it.
func (c *Circuit) Clone() *Circuit {
	return &Circuit{n: c.n, gates: append([]Gate(nil), c.gates...)}
}

// inverse returns the circuit of U†: the gates in reverse order, with S and
// S† exchanged.
func (c *Circuit) inverse() *Circuit {
	inv := &Circuit{n: c.n, gates: make([]Gate, len(c.gates))}
	for i, g := range c.gates {
		inv.gates[len(c.gates)-1-i] = g.inverse()
	}
	return inv
}

// Equal reports whether c and o have the same width and the same gates in
// the same order. It compares gate lists, not unitaries: CZ(0,1) and CZ(1,0)
// differ here.
func (c *Circuit) Equal(o *Circuit) bool {
	if c.n != o.n || len(c.gates) != len(o.gates) {
		return false
	}
	for i, g := range c.gates {
		if g != o.gates[i] {
			return false
		}
	}
	return true
}

// String returns the gates as text separated by spaces, such as
// "H(0) CNOT(0,1) Sdg(2)". The empty circuit is "".
func (c *Circuit) String() string { return string(c.AppendText(nil)) }

// AppendText appends the text form of c to b.
func (c *Circuit) AppendText(b []byte) []byte {
	for i, g := range c.gates {
		if i > 0 {
			b = append(b, ' ')
		}
		b = g.AppendText(b)
	}
	return b
}

// ParseCircuit parses the text form written by [Circuit.String] for a circuit
// on n qubits: gates such as "H(0)", "S(1)", "Sdg(1)", "CNOT(0,2)", "CZ(1,2)"
// separated by spaces or tabs. An error names the offset of the bad gate.
func ParseCircuit(n int, s string) (*Circuit, error) {
	if n < 0 {
		return nil, &ParseError{Input: s, Offset: 0, Reason: "negative qubit count", Err: ErrRange}
	}
	c := NewCircuit(n)
	i := 0
	for i < len(s) {
		if s[i] == ' ' || s[i] == '\t' {
			i++
			continue
		}
		start := i
		j := strings.IndexByte(s[i:], ')')
		if j < 0 {
			return nil, &ParseError{Input: s, Offset: start, Reason: "gate without closing parenthesis", Err: ErrSyntax}
		}
		end := i + j + 1
		g, off, reason, err := parseGate(s[start:end], n)
		if err != nil {
			return nil, &ParseError{Input: s, Offset: start + off, Reason: reason, Err: err}
		}
		if end < len(s) && s[end] != ' ' && s[end] != '\t' {
			return nil, &ParseError{Input: s, Offset: end, Reason: "unexpected " + strconv.QuoteRune(rune(s[end])) + " after gate", Err: ErrSyntax}
		}
		c.gates = append(c.gates, g)
		i = end
	}
	return c, nil
}

// parseGate parses one gate "NAME(a)" or "NAME(a,b)" and checks it against n
// qubits; on failure it returns the offset within tok, a reason and a
// sentinel.
func parseGate(tok string, n int) (g Gate, off int, reason string, err error) {
	open := strings.IndexByte(tok, '(')
	if open < 0 {
		return g, 0, "gate " + strconv.Quote(tok) + " without qubits", ErrSyntax
	}
	switch name := tok[:open]; name {
	case "H":
		g.Kind = GateH
	case "S":
		g.Kind = GateS
	case "Sdg":
		g.Kind = GateSdg
	case "CNOT":
		g.Kind = GateCNOT
	case "CZ":
		g.Kind = GateCZ
	default:
		return g, 0, "unknown gate " + strconv.Quote(name), ErrSyntax
	}
	args := tok[open+1 : len(tok)-1]
	want := 1
	if g.Kind.TwoQubit() {
		want = 2
	}
	parts := strings.Split(args, ",")
	if len(parts) != want {
		return g, open + 1, g.Kind.String() + " takes " + strconv.Itoa(want) + " qubit(s), got " + strconv.Itoa(len(parts)), ErrSyntax
	}
	q := [2]int{}
	pos := open + 1
	for k, a := range parts {
		v, e := strconv.Atoi(a)
		if e != nil || a == "" || a[0] == '+' || a[0] == '-' {
			return g, pos, "qubit " + strconv.Quote(a) + " is not a number", ErrSyntax
		}
		if v >= n {
			return g, pos, "qubit " + a + " beyond the qubit count " + strconv.Itoa(n), ErrRange
		}
		q[k] = v
		pos += len(a) + 1
	}
	if want == 2 && q[0] == q[1] {
		return g, open + 1, g.Kind.String() + " on a single qubit " + strconv.Itoa(q[0]), ErrSyntax
	}
	g.Q0, g.Q1 = q[0], q[1]
	return g, 0, "", nil
}

// Conjugate returns the string P' and the sign s (+1 or −1) with
// U P U† = s·P', where U is the unitary of c. It updates a copy of p gate by
// gate with the rules of Aaronson & Gottesman, "Improved simulation of
// stabilizer circuits", quant-ph/0406196, §III, costing a few bit
// operations per gate (the package conjugates many strings through one
// circuit with a tableau of the whole map). It panics if p has a different
// width.
func (c *Circuit) Conjugate(p String) (String, int) {
	mustSameWidth(c.n, p.n)
	q := p.Clone()
	var neg uint64
	for _, g := range c.gates {
		neg ^= conjugateWords(q.x, q.z, g)
	}
	return q, 1 - 2*int(neg)
}

// conjugateWords replaces the Pauli string with words x, z by g P g† and
// returns 1 if that flips its sign. The update rules are those of Aaronson &
// Gottesman (quant-ph/0406196, §III) for H, S and CNOT; S† is S applied
// three times, folded into one rule, and CZ is H(b) CNOT(a,b) H(b), folded
// likewise.
func conjugateWords(x, z []uint64, g Gate) (neg uint64) {
	wa, sa := g.Q0>>6, uint(g.Q0&63)
	xa, za := x[wa]>>sa&1, z[wa]>>sa&1
	switch g.Kind {
	case GateH:
		// X ↔ Z, Y → −Y.
		neg = xa & za
		t := (xa ^ za) << sa
		x[wa] ^= t
		z[wa] ^= t
	case GateS:
		// X → Y, Y → −X.
		neg = xa & za
		z[wa] ^= xa << sa
	case GateSdg:
		// X → −Y, Y → X.
		neg = xa &^ za
		z[wa] ^= xa << sa
	case GateCNOT:
		wb, sb := g.Q1>>6, uint(g.Q1&63)
		xb, zb := x[wb]>>sb&1, z[wb]>>sb&1
		neg = xa & zb & (xb ^ za ^ 1)
		x[wb] ^= xa << sb
		z[wa] ^= zb << sa
	case GateCZ:
		wb, sb := g.Q1>>6, uint(g.Q1&63)
		xb, zb := x[wb]>>sb&1, z[wb]>>sb&1
		neg = xa & xb & (za ^ zb)
		z[wa] ^= xb << sa
		z[wb] ^= xa << sb
	}
	return neg
}
