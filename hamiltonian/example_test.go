package hamiltonian_test

import (
	"fmt"
	"math"
	"os"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

func ExampleRead() {
	in := `# a two-site transverse-field Ising model
qubits 2
-0.5 I
-1 ZZ
-0.7 X_0
-0.7 X_1
`
	h, err := hamiltonian.Read(strings.NewReader(in))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(h.Qubits(), h.Len(), h.Offset(), h.OneNorm())
	hamiltonian.Write(os.Stdout, h)
	// Output:
	// 2 3 -0.5 2.4
	// qubits 2
	// -0.5 I
	// -1 ZZ
	// -0.7 XI
	// -0.7 IX
}

func ExampleRead_errors() {
	in := "qubits 3\n1 XYZ\n1+2i ZZI\n0.5 X_7\n"
	_, err := hamiltonian.Read(strings.NewReader(in))
	fmt.Println(err)
	// Output:
	// hamiltonian: line 3: complex coefficient "1+2i": Hamiltonian coefficients must be real
	// hamiltonian: line 4: Pauli string "X_7": qubit 7 beyond the qubit count 3
}

func ExampleGroundState() {
	// The 8-site transverse-field Ising ring at its critical point, whose
	// ground energy is −2/sin(π/16) (Pfeuty 1970).
	h, err := hamiltonian.TransverseFieldIsing(hamiltonian.Ring(8), 1, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	gs, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("E0 = %.9f (closed form %.9f)\n", gs.Energy, -2/math.Sin(math.Pi/16))
	// By Hellmann–Feynman on the same formula, ⟨X_q⟩ = −(1/N) dE0/dh =
	// (1/4) Σ_{m=1..4} sin((2m−1)π/16) = 0.640729.
	fmt.Printf("<X_0> = %.6f\n", hamiltonian.Expectation(gs.State, pauli.MustParse("XIIIIIII")))
	// Output:
	// E0 = -10.251661791 (closed form -10.251661791)
	// <X_0> = 0.640729
}

func ExampleHamiltonian_Apply() {
	// Y|0⟩ = i|1⟩ (MATH.md §7); amplitude a is the basis state with bit q
	// of a on qubit q.
	h, _ := hamiltonian.New(1, 0, []hamiltonian.Term{{Pauli: pauli.MustParse("Y"), Coeff: 1}})
	dst := make([]complex128, 2)
	h.Apply(dst, []complex128{1, 0})
	fmt.Println(dst)
	// Output: [(0+0i) (0+1i)]
}
