package allocate

// Internal functions exposed to the external tests.
var (
	CheckFinite      = checkFinite
	LargestRemainder = largestRemainder
)

// SimplexMin is the per-term weight step of Overlap.
var SimplexMin = simplexMin
