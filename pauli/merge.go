package pauli

// MergeSettings returns each setting of settings once, in order of first
// use, with the sum of weights over its repeats (shot counts or
// probabilities). Entries of zero weight are left out. Settings are compared
// by [Setting.Key], so settings of different widths must not be mixed. It
// panics if the lengths differ.
func MergeSettings[W int | float64](settings []Setting, weights []W) ([]Setting, []W) {
	if len(settings) != len(weights) {
		panic("pauli: MergeSettings: lengths of settings and weights differ")
	}
	index := make(map[string]int, len(settings))
	var distinct []Setting
	var sums []W
	for k, s := range settings {
		if weights[k] == 0 {
			continue
		}
		key := s.Key()
		if j, ok := index[key]; ok {
			sums[j] += weights[k]
			continue
		}
		index[key] = len(distinct)
		distinct = append(distinct, s)
		sums = append(sums, weights[k])
	}
	return distinct, sums
}
