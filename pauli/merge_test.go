package pauli

import (
	"slices"
	"testing"
)

// TestMergeSettings checks a worked example: repeats anywhere in the list
// merge into the first used occurrence, zero weights vanish, and an entangled
// setting never merges with a local one of the same width.
func TestMergeSettings(t *testing.T) {
	zz, xx := mustSetting(t, "ZZ"), mustSetting(t, "XX")
	bell, err := NewFamilySetting([]String{MustParse("XX"), MustParse("ZZ")})
	if err != nil {
		t.Fatal(err)
	}
	got, sums := MergeSettings([]Setting{xx, zz, bell, xx, zz, bell, zz}, []int{1, 0, 2, 3, 4, 5, 6})
	// ZZ's first entry has weight 0, so its first use is after the Bell
	// setting's.
	want := []string{"XX", bell.String(), "ZZ"}
	var names []string
	for _, s := range got {
		names = append(names, s.String())
	}
	if !slices.Equal(names, want) || !slices.Equal(sums, []int{4, 7, 10}) {
		t.Errorf("MergeSettings = %v %v, want %v [4 7 10]", names, sums, want)
	}
	if got, p := MergeSettings([]Setting{zz, zz}, []float64{0.25, 0.5}); len(got) != 1 || p[0] != 0.75 {
		t.Errorf("MergeSettings(float64) = %v %v, want [ZZ] [0.75]", got, p)
	}
}

func mustSetting(t *testing.T, s string) Setting {
	t.Helper()
	st, err := NewSetting(MustParse(s))
	if err != nil {
		t.Fatal(err)
	}
	return st
}
