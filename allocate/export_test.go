package allocate

// Internal functions exposed to the external tests.
var (
	CheckFinite      = checkFinite
	LargestRemainder = largestRemainder
)
