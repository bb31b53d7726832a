package guarantee

import "strconv"

// AnytimeMethod names the confidence sequence [Anytime] uses.
//
// # Which bound applies when
//
// Every bound of this package covers shot noise only (see the package
// documentation). Choose by how the shots are planned and when you decide
// to stop:
//
//	plan of the shots                 stop decided          use                                  why
//	fixed list, counts set in advance  before any shot       Certify / CertifyPlan (a priori)     worst case over all states; no data needed (MATH §3.1)
//	fixed list, counts set in advance  after the shots       Empirical                            adapts to the state's variance; one look at the data (§4.3)
//	fixed list, repeated in rounds     after each round      Sequential                           δ spent over the rounds by StoppingSchedule (§4.4)
//	settings drawn i.i.d. from π       after the shots       RandomizedBound                      one look; i.i.d. single-shot values (§4.1)
//	settings drawn i.i.d. from π       whenever you like     Anytime with Betting (default)       valid at every time at once; near the normal width for many shots
//	settings drawn i.i.d. from π       whenever you like     Anytime with BernsteinEpochs         same guarantee, closed form, wider by the union over epochs
//	pilot batch, then i.i.d. from π    whenever you like     Anytime with Pilot > 0               pilot only chooses π (sample splitting); certificate from later shots
//	i.i.d. from π, shifted values      whenever you like     Anytime with Plan.WithBaseline(c)    c_i fixed before the shots (a classical state's ⟨P_i⟩); same mean, the groups' means leave the variance (§4.11)
//	adaptive (settings from outcomes)  —                     none of these                        the plan depends on the data; use a pilot and a fixed π instead
//
// The normal-approximation intervals (DataBound.ApproxRadius, estimate's
// ApproxInterval) are not guarantees at any stopping rule. A bound computed
// after a data-dependent choice of how many shots to take is valid only if
// it is a confidence sequence (Anytime) or spends δ over the checks in
// advance (Sequential); re-running Empirical after every round and
// stopping when it looks good is not valid.
type AnytimeMethod int

const (
	// Betting is the hedged betting confidence sequence of Waudby-Smith &
	// Ramdas ([BettingCS]).
	Betting AnytimeMethod = iota
	// BernsteinEpochs is the empirical Bernstein bound of Maurer & Pontil
	// at geometric epochs with a union over them ([BernsteinCS]).
	BernsteinEpochs
)

// String returns the method's name.
func (m AnytimeMethod) String() string {
	switch m {
	case Betting:
		return "betting"
	case BernsteinEpochs:
		return "bernstein-epochs"
	}
	return "AnytimeMethod(" + strconv.Itoa(int(m)) + ")"
}
