// Package estimate turns measured shots into energies with error bars: it
// stores shot records and reads and writes them, estimates the energy of a
// Hamiltonian from them, measures shots through the [Device] interface or
// the built-in state-vector [Simulator], and exports settings as OpenQASM 3
// programs for any hardware stack. Formulas: MATH.md §2–§5.
//
// # Conventions
//
// A local setting measures every qubit in X, Y or Z (see package pauli);
// an entangled setting runs the Clifford circuit of a commuting family and
// then measures every qubit in Z, and a term it covers is read as the sign
// times the parity of the outcome on the term's Z-image. [Grouped], its
// streamed form [Stream], [ImportanceSampling], the [Simulator] (which
// applies the circuit to the amplitudes), the record files (an entangled setting is written as its
// generators joined by '|', such as "XXII|ZZII|IIZZ") and [ExportQASM] (the
// circuit's h, s, sdg, cx and cz gates before the measurement) handle both
// kinds; the classical-shadow estimators, [EigenState] and the readout
// mitigation of [Options.Readout] need local settings and return an error
// otherwise ([Mitigated] handles both kinds). A
// measured bit 0 means eigenvalue +1 and 1 means −1; a bit-string as text
// is read left to right, qubit 0 first. A state vector's amplitude a
// belongs to the basis state with bit q of a on qubit q.
//
// # Records
//
// [Records] stores every shot's setting and outcome, grouping shots of
// identical settings (a group is one distinct setting) and keeping the
// order the shots were added. Estimators read groups; [Records.Shots] and
// [Records.Shot] give shot order.
//
// # Record files
//
// The CSV form has the header line "setting,outcome" and one row per shot
// in shot order. The setting is either spelled out ("XZZY", qubit 0 first)
// or given as a non-negative integer index into a settings list the reader
// is handed (for example the manifest of [ExportQASM]). The outcome is the
// bit-string, '0' and '1', qubit 0 first:
//
//	setting,outcome
//	ZZZZ,0110
//	XXYY,1011
//	0,0101
//
// Hardware stacks often print a bit register with its highest bit first;
// reverse such strings so that the first character is qubit 0. [ReadCSV]
// stops at the first bad line and returns a [*LineError] with its number:
// a wrong header or field count, an unknown letter, an index out of range,
// a setting or outcome of the wrong width, a character other than 0 and 1.
// It returns no partial records.
//
// The JSON form lists the distinct settings once and each shot as an index
// into them with its outcome:
//
//	{"qubits": 4, "settings": ["ZZZZ", "XXYY"],
//	 "shots": [{"setting": 0, "outcome": "0110"}, {"setting": 1, "outcome": "1011"}]}
//
// Files are written atomically (a temporary file renamed into place), so a
// failed write leaves no partial file.
//
// # Which estimator fits which plan
//
// [Grouped] (MATH.md §2) works on every plan, since it needs to know
// nothing about how the settings were chosen: each term is averaged over
// the shots that cover it. (For a plan that chose settings from earlier
// outcomes, its error bar ignores the adaptation.) Its
// standard error is estimated from the data and includes the covariance of
// terms that share shots: the sample variance of the per-shot contributions
// within each distinct setting, and a leave-one-out residual for settings
// measured once; see [Grouped].
//
// The inverse-probability estimators are unbiased only for the plan they
// were made for: [UniformShadow] for settings drawn uniformly at random
// (classical shadows), [BiasedShadow] for settings drawn from per-qubit
// distributions (locally biased shadows), and [ImportanceSampling] for
// shots that each drew one term with probability |h_i|/‖h‖₁ and measured a
// setting covering it. Each needs the plan's randomness to be exactly as
// stated; when in doubt use [Grouped].
//
// Every estimator returns a [Result]: the energy, per-term means and cover
// counts, the bias bound of the terms left out, a standard error from the
// data, and an approximate normal interval. The interval is labelled
// approximate because it is: rigorous bounds are package guarantee's job.
//
// # Readout error
//
// [SimulatorOptions.Readout] flips each read bit with probability P01
// (0 read as 1) or P10 (1 read as 0), independently per qubit and shot.
// [Options.Readout] mitigates by dividing each term's sample by
// Π_{q ∈ supp P_i} (1 − P01_q − P10_q): with independent flips the
// expected sample of a weight-k term is that factor times the true value
// plus terms in the asymmetries P10_q − P01_q, so the division is exact for
// symmetric flips and leaves a bias bounded by [Result.ReadoutBias]
// otherwise. The division scales the spread up by the same factor, so
// mitigation widens the error bar. (Independent per-qubit flips and the
// per-qubit rescaling are common practice; the expectation and the bias
// bound are derived in MATH.md §2.1: a flipped qubit multiplies
// (−1)^bit by −1, so E[(−1)^read] = (1 − P01 − P10)·(−1)^bit + (P10 − P01)
// per qubit, and the product over the support gives the factor and the
// asymmetry terms.)
//
// # Readout calibration
//
// [Calibration] counts calibration shots on prepared basis states: the
// minimal set is all-0 and all-1 ([CalibrationPreparations]), which give
// every qubit one trial of each of its two flip rates per shot pair.
// [Calibration.Bounds] turns the counts into Clopper–Pearson intervals
// ([ClopperPearson]) that hold together with probability 1 − δ_cal.
// [NewMitigation] inverts the readout model with the interval centres as
// rates, and [Mitigated] is the grouped estimate with mitigated samples for
// local and entangled settings (an entangled setting's term is mitigated
// on its Z-image, the bits it reads; [TermMask]); its ReadoutBias is the
// worst case over the intervals (MATH.md §2.1.1). Calibration records are
// a CSV file "prepared,outcome" ([ReadCalibration]); [SimulateCalibration]
// and [WriteCalibrationShots] simulate them. Package guarantee bounds the
// mitigated estimate (guarantee.CalibratedBounds).
//
// Disjoint pairs of qubits whose read bits may flip together are calibrated
// as pairs ([NewPairCalibration], [ReadCalibrationPairs]; four preparations,
// [PairCalibrationPreparations]): [Calibration.Mitigation] reads each pair
// through the inverse of its observed 4×4 readout matrix and bounds the
// bias over the Clopper–Pearson box of its 16 entries (MATH.md §2.1.5).
//
// # Cost
//
// The estimators walk the Hamiltonian term by term. For every qubit and
// letter they keep the set of distinct settings with that letter there, as
// a bit set, so the settings covering a term are an intersection of bit
// sets: about weight·G/64 word operations per term for G distinct
// settings, with no search per setting. Then every (term, shot) sample is
// read once or twice, a parity by popcount. Memory is a few words per shot.
//
// The simulator costs O(n·2^n) per distinct setting when settings get many
// shots. When they get few (random plans), it rotates the highest qubits
// once for all settings that agree on them, draws those qubits' bits from
// their marginal distribution, and rotates only the 2^(n−h) amplitudes
// that agree with the drawn bits; the split h is chosen per call to
// minimise the work.
//
// # Circuits
//
// [ExportQASM] writes one OpenQASM 3 program per distinct setting (X: h;
// Y: sdg then h; Z: nothing; then every qubit q measured into c[q]) and a
// manifest of shot counts.
//
// # Randomness
//
// The simulator takes a seed and uses math/rand/v2's PCG; the same seed and
// calls give the same outcomes.
package estimate
