package allocate

// Internal functions exposed to the external tests.
var (
	CheckFinite      = checkFinite
	LargestRemainder = largestRemainder
)

// SimplexMin is the per-term weight step of Overlap.
var SimplexMin = simplexMin

// NarrowedGreedy returns a Greedy whose walks narrow (finish from the
// terms they can still accept) after reading read entries.
func NarrowedGreedy(read int) *Greedy { return &Greedy{narrowAt: read + 1} }

// NarrowedGreedyGC returns a GreedyGC whose walks narrow after reading
// read entries, or never if read is negative.
func NarrowedGreedyGC(read int) *GreedyGC {
	if read < 0 {
		return &GreedyGC{narrowAt: -1}
	}
	return &GreedyGC{narrowAt: read + 1}
}
