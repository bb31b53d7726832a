// Package mathrefs holds only a test: every citation of the repository's
// MATH.md must name a section it has.
package mathrefs_test

import (
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
)

// root is the repository root, seen from this package's directory.
const root = "../.."

// The repository's MATH.md is the single place code and docs cite for
// formulas. These tests read every .go and .md file of the module and fail
// when a citation "MATH.md §X" or "MATH §X" (also ranges "§3.1–3.2" and
// lists "§5.3, §5.4") names a section that has no heading in MATH.md, and
// when MATH.md itself refers to a section ("§X") it does not have.

// headingRE matches a numbered heading of MATH.md: "## 3. A-priori ..." is
// section 3 and "### 3.1 Shot-wise ..." section 3.1.
var headingRE = regexp.MustCompile(`(?m)^#{2,4} (\d+(?:\.\d+)*)\.?\s`)

// citeRE matches a citation of MATH.md with the section numbers after it:
// a first "§N[.M]", then any number of "–N.M"/"–§N.M" (a range) or
// ", §N.M" / " and §N.M" (a list).
var citeRE = regexp.MustCompile(`MATH(?:\.md)?\s+§(\d+(?:\.\d+)*)((?:\s*[–-]\s*§?\d+(?:\.\d+)*|\s*(?:,|and)\s*§\d+(?:\.\d+)*)*)`)

// numRE picks the section numbers out of a citation's tail.
var numRE = regexp.MustCompile(`\d+(?:\.\d+)*`)

// sectionRE matches any reference "§N[.M]" (used inside MATH.md).
var sectionRE = regexp.MustCompile(`§(\d+(?:\.\d+)*)`)

// commentBreakRE joins a citation broken over two comment lines, as in
// "(MATH.md\n// §3.3)", into one line.
var commentBreakRE = regexp.MustCompile(`\s*\n\s*(?://)?\s*`)

// mathSections returns the section numbers of the headings of a MATH.md text.
func mathSections(text string) map[string]bool {
	s := make(map[string]bool)
	for _, m := range headingRE.FindAllStringSubmatch(text, -1) {
		s[m[1]] = true
	}
	return s
}

// citations returns the sections a file's text cites as MATH.md sections.
func citations(text string) []string {
	text = commentBreakRE.ReplaceAllString(text, " ")
	var out []string
	for _, m := range citeRE.FindAllStringSubmatch(text, -1) {
		out = append(out, m[1])
		out = append(out, numRE.FindAllString(m[2], -1)...)
	}
	return out
}

func readMath(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(root, "MATH.md"))
	if err != nil {
		t.Fatalf("the repository must carry its math document: %v", err)
	}
	return string(b)
}

// TestMathCitationParser checks the scanner itself on hand-written text, so
// that a scanner that finds nothing cannot pass the test below by default.
func TestMathCitationParser(t *testing.T) {
	cite := "MATH" + ".md §"
	text := "// bound (" + cite + "3.1–3.2), and (" + cite + "5.3, §5.4);\n" +
		"// short form (MATH §7: Y|0⟩ = i|1⟩) and a break (" + "MATH.md\n// §3.3).\n" +
		"// ranges " + cite + "3–§4 and " + cite + "2 errs by δ = 0.05, 2 more."
	got := citations(text)
	want := []string{"3.1", "3.2", "5.3", "5.4", "7", "3.3", "3", "4", "2"}
	if !slices.Equal(got, want) {
		t.Errorf("citations = %q, want %q", got, want)
	}
	secs := mathSections("# Title\n\n## 1. Problem\n\n### 3.1 Shot-wise\n\n## 12. Late\n")
	for _, s := range []string{"1", "3.1", "12"} {
		if !secs[s] {
			t.Errorf("heading %s not found in %v", s, secs)
		}
	}
	if secs["3"] || secs["2"] {
		t.Errorf("sections without a heading found: %v", secs)
	}
}

// TestMathCitationsExist fails for every citation of a MATH.md section that
// MATH.md does not have, naming the file and the section.
func TestMathCitationsExist(t *testing.T) {
	text := readMath(t)
	secs := mathSections(text)
	// The document's own structure: sections 1 to 8 with the subsections
	// the code cites most (a MATH.md without them is not the document).
	for _, s := range []string{"1", "2", "3", "3.1", "3.2", "3.3", "3.4", "3.5", "4", "4.1", "5", "5.1", "6", "7", "8"} {
		if !secs[s] {
			t.Errorf("MATH.md has no section %s", s)
		}
	}
	for _, m := range sectionRE.FindAllStringSubmatch(text, -1) {
		if !secs[m[1]] {
			t.Errorf("MATH.md refers to §%s, which it does not have", m[1])
		}
	}
	files, cites := 0, 0
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if path != root && strings.HasPrefix(d.Name(), ".") && d.Name() != ".ci" {
				return filepath.SkipDir // .git and the like
			}
			return nil
		}
		if ext := filepath.Ext(path); ext != ".go" && ext != ".md" {
			return nil
		}
		b, err := os.ReadFile(path)
		if err != nil {
			return err
		}
		files++
		rel, _ := filepath.Rel(root, path)
		for _, s := range citations(string(b)) {
			cites++
			if !secs[s] {
				t.Errorf("%s cites MATH.md §%s, which has no heading in MATH.md", rel, s)
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	// The code cites the document about a hundred times; far fewer means
	// the scanner stopped finding them.
	if cites < 50 {
		t.Errorf("found %d citations in %d files, want at least 50", cites, files)
	}
}
