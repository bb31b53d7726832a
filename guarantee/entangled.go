package guarantee

import "github.com/shotplan/shotplan/pauli"

// covered appends to dst the terms setting s covers. A local setting goes
// through the letter-bucketed cover index; an entangled one has no letters
// to bucket by and goes through [pauli.Table.Covered], which tests every
// term against its circuit. Either way the terms are exactly those s
// covers, so the certificate of MATH.md §3.1 is evaluated unchanged.
func (c *coverage) covered(dst []int32, s pauli.Setting) []int32 {
	if s.IsLocal() {
		x, z := s.Words()
		return c.index.AppendCovered(dst, x, z)
	}
	for _, i := range c.h.Table().Covered(nil, s) {
		dst = append(dst, int32(i))
	}
	return dst
}
