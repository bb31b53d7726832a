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
