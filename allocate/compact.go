package allocate

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// CompactPlanVersion is the version of the compact plan file layout
// described at [WriteCompactPlan]; [ReadPlan] reads it and the layout of
// [PlanVersion].
const CompactPlanVersion = 2

// CompactSplitPlanVersion is the compact layout with the coefficient split
// of [Plan].Split on the setting lines (see [WriteCompactPlan]); a plan
// without a split is written as version 2, byte for byte as before.
const CompactSplitPlanVersion = 4

// MaxPlanLineBytes is the longest line [ReadPlan] accepts in a compact plan
// file (16 MiB: a setting line of the widest entangled setting with its
// drawn terms, or a line of cover counts).
const MaxPlanLineBytes = 16 << 20

// coverPerLine is the number of cover counts on one line of a compact plan.
const coverPerLine = 64

// Compact returns a copy of p in which every setting appears once, in order
// of first use, with its total number of shots. The cover counts are
// unchanged. If p has drawn terms, the copy's Drawn lists, for the shots of
// each distinct setting in turn, the terms its shots drew grouped by term
// in order of first appearance, so that the drawn terms of a setting are
// runs of equal terms.
//
// Compact changes only the order of shots. Nothing this module computes
// from a plan depends on that order: the cover counts N_i, the certified
// bounds of package guarantee (functions of N_i and the coefficients), and
// the estimators of package estimate (sums over the shots of each setting,
// or for importance sampling a mean over the shots of an i.i.d. draw, where
// the shots of one setting are interchangeable) are invariant under any
// reordering of the shots that keeps each shot's setting and drawn term.
func (p *Plan) Compact() *Plan {
	index := make(map[string]int)
	of := make([]int, len(p.Settings))
	q := &Plan{Qubits: p.Qubits, Cover: append([]int(nil), p.Cover...), Stats: p.Stats, Split: cloneSplit(p.Split)}
	for k, s := range p.Settings {
		key := s.Key()
		j, ok := index[key]
		if !ok {
			j = len(q.Settings)
			index[key] = j
			q.Settings = append(q.Settings, s)
			q.Shots = append(q.Shots, 0)
		}
		q.Shots[j] += p.Shots[k]
		of[k] = j
	}
	if p.Drawn == nil {
		return q
	}
	if len(p.Drawn) != p.TotalShots() {
		q.Drawn = append([]int(nil), p.Drawn...)
		return q
	}
	type run struct{ term, count int }
	runs := make([][]run, len(q.Settings))
	at := make(map[[2]int]int) // (distinct setting, term) → index in runs
	n := 0
	for k := range p.Settings {
		j := of[k]
		for range p.Shots[k] {
			t := p.Drawn[n]
			n++
			if r, ok := at[[2]int{j, t}]; ok {
				runs[j][r].count++
				continue
			}
			at[[2]int{j, t}] = len(runs[j])
			runs[j] = append(runs[j], run{t, 1})
		}
	}
	q.Drawn = make([]int, 0, len(p.Drawn))
	for _, rs := range runs {
		for _, r := range rs {
			for range r.count {
				q.Drawn = append(q.Drawn, r.term)
			}
		}
	}
	return q
}

// WriteCompactPlan writes p to w as a compact plan file, recording seed as
// the seed the strategy was given. Its size grows with the number of
// distinct settings (and drawn terms per setting), not with the number of
// shots: every repeat of a setting is merged, as [Plan.Compact] does, which
// changes only the order of shots (see there why no result depends on it).
// The file is JSON Lines, one JSON object a line, written as it goes:
//
//	{"format": "shotplan plan", "version": 2, "qubits": 4, "strategy": "greedy", "seed": 0, "shots": 1000, "settings": 2, "terms": 7, "drawn": false}
//	{"setting": "ZZZZ", "shots": 600}
//	{"setting": "XXXX", "shots": 400}
//	{"cover": [600, 600, 600, 400, 400, 400, 400]}
//
// The first line is the header: "settings" is the number of setting lines
// that follow, "terms" the number of cover counts, "drawn" whether the
// setting lines carry drawn terms. Each setting line holds one distinct
// setting (qubit 0 first, as in package pauli) and its shots; with drawn
// terms it also holds "drawn": [[term, count], ...], the terms its shots
// drew and how often, counts adding up to its shots. The cover lines, of at
// most 64 counts each, give N_i for every term in term order. Keys within a
// line may come in any order when read.
//
// A plan with a coefficient split ([Plan].Split, MATH.md §2.5) is written as
// version 4 ([CompactSplitPlanVersion]): the setting line of every group of
// the split also holds "split": [[term, weight], ...], the terms it lists
// with their weights, each weight in the shortest form that reads back to
// the same float64.
//
// WriteCompactPlan returns an error, and writes nothing, if p is
// inconsistent (see [WritePlan]).
func WriteCompactPlan(w io.Writer, p *Plan, seed uint64) error {
	if err := validPlan(p); err != nil {
		return err
	}
	c := p.Compact()
	bw := bufio.NewWriterSize(w, 64<<10)
	name, _ := json.Marshal(c.Stats.Strategy)
	version := CompactPlanVersion
	var splitOf map[string]int
	if len(c.Split) > 0 {
		version, splitOf = CompactSplitPlanVersion, c.Split.Groups()
	}
	fmt.Fprintf(bw, "{\"format\": %q, \"version\": %d, \"qubits\": %d, \"strategy\": %s, \"seed\": %d, \"shots\": %d, \"settings\": %d, \"terms\": %d, \"drawn\": %t}\n",
		PlanFormat, version, c.Qubits, name, seed, c.TotalShots(), len(c.Settings), len(c.Cover), c.Drawn != nil)
	var line []byte
	n := 0
	for k, s := range c.Settings {
		line = append(line[:0], `{"setting": "`...)
		line = s.AppendText(line) // letters and '|' only: nothing to escape
		line = append(line, `", "shots": `...)
		line = strconv.AppendInt(line, int64(c.Shots[k]), 10)
		if c.Drawn != nil {
			line = append(line, `, "drawn": [`...)
			end := n + c.Shots[k]
			for first := true; n < end; first = false {
				t, m := c.Drawn[n], 1
				for n+m < end && c.Drawn[n+m] == t {
					m++
				}
				if !first {
					line = append(line, ", "...)
				}
				line = append(line, '[')
				line = strconv.AppendInt(line, int64(t), 10)
				line = append(line, ", "...)
				line = strconv.AppendInt(line, int64(m), 10)
				line = append(line, ']')
				n += m
			}
			line = append(line, ']')
		}
		if g, ok := splitOf[s.Key()]; ok {
			line = append(line, `, "split": [`...)
			for k, t := range c.Split[g].Terms {
				if k > 0 {
					line = append(line, ", "...)
				}
				line = append(line, '[')
				line = strconv.AppendInt(line, int64(t), 10)
				line = append(line, ", "...)
				line = strconv.AppendFloat(line, c.Split[g].Weights[k], 'g', -1, 64)
				line = append(line, ']')
			}
			line = append(line, ']')
		}
		line = append(line, "}\n"...)
		if _, err := bw.Write(line); err != nil {
			return err
		}
	}
	for i := 0; i < len(c.Cover); i += coverPerLine {
		line = append(line[:0], `{"cover": [`...)
		for j, x := range c.Cover[i:min(i+coverPerLine, len(c.Cover))] {
			if j > 0 {
				line = append(line, ", "...)
			}
			line = strconv.AppendInt(line, int64(x), 10)
		}
		line = append(line, "]}\n"...)
		if _, err := bw.Write(line); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// WriteCompactPlanFile writes p to path as a compact plan file (see
// [WriteCompactPlan]), atomically: a failed write leaves any earlier file in
// place and no partial file behind.
func WriteCompactPlanFile(path string, p *Plan, seed uint64) error {
	return atomicfile.Write(path, func(w io.Writer) error { return WriteCompactPlan(w, p, seed) })
}

// isCompact reports whether the first line of a plan file is the header of
// a compact plan: a complete JSON object with version 2.
func isCompact(br *bufio.Reader) bool {
	v, ok := headerVersion(br)
	return ok && (v == strconv.Itoa(CompactPlanVersion) || v == strconv.Itoa(CompactSplitPlanVersion))
}

// headerVersion peeks at the first line of a plan file (a leading byte
// order mark skipped) and returns the raw JSON text of its "version" field;
// ok is false when that line is not a complete JSON object.
func headerVersion(br *bufio.Reader) (version string, ok bool) {
	head, _ := br.Peek(64 << 10)
	head = bytes.TrimPrefix(head, []byte("\ufeff"))
	first, _, found := bytes.Cut(head, []byte{'\n'})
	if !found {
		first = head
	}
	var h struct {
		Version json.RawMessage `json:"version"`
	}
	if json.Unmarshal(first, &h) != nil {
		return "", false
	}
	return string(h.Version), true
}

// compactReader reads a compact plan file line by line, holding one line at
// a time.
type compactReader struct {
	br   *bufio.Reader
	name string
	line int
	read int64
	buf  []byte
}

func (cr *compactReader) fail(line int, entry, format string, args ...any) error {
	return &PlanFileError{File: cr.name, Line: line, Entry: entry, Reason: fmt.Sprintf(format, args...), Err: ErrPlanFile}
}

// next returns the next line that is not blank, without its end of line,
// or io.EOF at the end of the input.
func (cr *compactReader) next() ([]byte, error) {
	for {
		cr.buf = cr.buf[:0]
		for {
			part, err := cr.br.ReadSlice('\n')
			cr.read += int64(len(part))
			if cr.read > MaxPlanBytes {
				return nil, cr.fail(cr.line+1, "", "the file is longer than %d bytes, the reader's limit (MaxPlanBytes)", MaxPlanBytes)
			}
			if len(cr.buf)+len(part) > MaxPlanLineBytes {
				return nil, cr.fail(cr.line+1, "", "line longer than %d bytes, the reader's limit (MaxPlanLineBytes)", MaxPlanLineBytes)
			}
			cr.buf = append(cr.buf, part...)
			if err == bufio.ErrBufferFull {
				continue
			}
			if err != nil && err != io.EOF {
				return nil, err
			}
			if err == io.EOF && len(cr.buf) == 0 {
				return nil, io.EOF
			}
			break
		}
		cr.line++
		text := bytes.TrimSpace(cr.buf)
		if cr.line == 1 {
			text = bytes.TrimSpace(bytes.TrimPrefix(text, []byte("\ufeff")))
		}
		if len(text) > 0 {
			return text, nil
		}
	}
}

// object decodes one line holding a JSON object: every key must be one of
// fields (each at most once), whose function decodes the value.
func (cr *compactReader) object(text []byte, entry string, fields map[string]func(*json.Decoder) error) error {
	dec := json.NewDecoder(bytes.NewReader(text))
	dec.UseNumber()
	fail := func(err error) error {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			return cr.fail(cr.line, entry, "%v", se)
		case errors.As(err, &te):
			return cr.fail(cr.line, entry, "%s is not a valid %s", te.Value, te.Type)
		case errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF):
			return cr.fail(cr.line, entry, "the line ends inside its JSON object")
		}
		return cr.fail(cr.line, entry, "%v", err)
	}
	tok, err := dec.Token()
	if err != nil {
		return fail(err)
	}
	if d, ok := tok.(json.Delim); !ok || d != '{' {
		return cr.fail(cr.line, entry, "want a JSON object on the line, found %s", inputcap.Quote(string(text)))
	}
	seen := map[string]bool{}
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return fail(err)
		}
		key, _ := tok.(string)
		decode, ok := fields[key]
		if !ok {
			return cr.fail(cr.line, entry, "unknown key %s", inputcap.Quote(key))
		}
		if seen[key] {
			return cr.fail(cr.line, entry, "key %s repeated", inputcap.Quote(key))
		}
		seen[key] = true
		if err := decode(dec); err != nil {
			var pe *PlanFileError
			if errors.As(err, &pe) {
				return err
			}
			return fail(err)
		}
	}
	if _, err := dec.Token(); err != nil {
		return fail(err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return cr.fail(cr.line, entry, "text after the closing brace (a compact plan holds one JSON object a line)")
	}
	return nil
}

// intField returns a field decoder that reads an integer into *v and sets
// *have.
func intField(v *int, have *bool) func(*json.Decoder) error {
	return func(dec *json.Decoder) error {
		*have = true
		var n json.Number
		if err := dec.Decode(&n); err != nil {
			return err
		}
		x, err := strconv.Atoi(n.String())
		if err != nil {
			return fmt.Errorf("number %s is not a valid int", inputcap.Clip(n.String()))
		}
		*v = x
		return nil
	}
}

// readCompact reads a compact plan file (version 2) from br.
func readCompact(br *bufio.Reader, name string) (*PlanFile, error) {
	cr := &compactReader{br: br, name: name}
	text, err := cr.next()
	if err != nil {
		return nil, err
	}
	var (
		hdr                                      struct{ format, strategy string }
		version, qubits, total, nSettings, terms int
		seed                                     uint64
		drawn                                    bool
		haveV, haveQ, haveT, haveS, haveM        bool
		haveD                                    bool
	)
	err = cr.object(text, "", map[string]func(*json.Decoder) error{
		"format":   func(d *json.Decoder) error { return d.Decode(&hdr.format) },
		"version":  intField(&version, &haveV),
		"qubits":   intField(&qubits, &haveQ),
		"strategy": func(d *json.Decoder) error { return d.Decode(&hdr.strategy) },
		"seed":     func(d *json.Decoder) error { return d.Decode(&seed) },
		"shots":    intField(&total, &haveT),
		"settings": intField(&nSettings, &haveS),
		"terms":    intField(&terms, &haveM),
		"drawn":    func(d *json.Decoder) error { haveD = true; return d.Decode(&drawn) },
	})
	if err != nil {
		return nil, err
	}
	switch {
	case hdr.format != PlanFormat:
		return nil, cr.fail(1, "format", "not a plan file (format %s, want %q)", inputcap.Quote(hdr.format), PlanFormat)
	case !haveV || (version != CompactPlanVersion && version != CompactSplitPlanVersion):
		return nil, cr.fail(1, "version", "version %d, want %d (or %d with a split)", version, CompactPlanVersion, CompactSplitPlanVersion)
	case !haveQ || !haveT || !haveS || !haveM || !haveD:
		return nil, cr.fail(1, "", "the header needs the keys \"qubits\", \"shots\", \"settings\", \"terms\" and \"drawn\"")
	case qubits < 1 || qubits >= hamiltonian.MaxReadQubits:
		return nil, cr.fail(1, "qubits", "qubit count %d out of range [1, %d)", qubits, hamiltonian.MaxReadQubits)
	case total < 1 || total > MaxShots:
		return nil, cr.fail(1, "shots", "total %d out of range [1, %d] (MaxShots)", total, MaxShots)
	case nSettings < 1 || nSettings > total:
		return nil, cr.fail(1, "settings", "%d settings for %d shots, want between 1 and the shots", nSettings, total)
	case terms < 0 || terms > MaxPlanBytes:
		return nil, cr.fail(1, "terms", "term count %d out of range [0, %d]", terms, MaxPlanBytes)
	}
	f := &PlanFile{name: name, Seed: seed, qubitsLine: 1}
	p := &Plan{Qubits: qubits, Stats: Stats{Strategy: hdr.strategy}}
	// Preallocate no more than a line's worth: the header's counts are
	// checked against the lines that follow, not trusted for memory.
	p.Settings = make([]pauli.Setting, 0, min(nSettings, 1<<12))
	p.Shots = make([]int, 0, min(nSettings, 1<<12))
	p.Cover = make([]int, 0, min(terms, 1<<12))
	if drawn {
		p.Drawn = make([]int, 0, min(total, 1<<16))
	}
	first := make(map[string]int) // setting key → its line
	sum := 0
	sums := &splitSums{sum: map[int]float64{}, line: map[int]int{}}
	for {
		text, err = cr.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if len(p.Settings) == nSettings {
			if err := cr.coverLine(text, f, p, terms, total, nSettings); err != nil {
				return nil, err
			}
			continue
		}
		entry := fmt.Sprintf("settings[%d]", len(p.Settings))
		var (
			settingText     string
			shots           int
			haveText, haveK bool
			pairs           [][]json.Number
			haveDrawn       bool
			split           [][]json.Number
			haveSplit       bool
		)
		err = cr.object(text, entry, map[string]func(*json.Decoder) error{
			"setting": func(d *json.Decoder) error { haveText = true; return d.Decode(&settingText) },
			"shots":   intField(&shots, &haveK),
			"drawn":   func(d *json.Decoder) error { haveDrawn = true; return d.Decode(&pairs) },
			"split": func(d *json.Decoder) error {
				if version != CompactSplitPlanVersion {
					return cr.fail(cr.line, entry, "a \"split\" needs version %d, the header says %d", CompactSplitPlanVersion, version)
				}
				haveSplit = true
				return d.Decode(&split)
			},
			"cover": func(*json.Decoder) error {
				return cr.fail(cr.line, "", "a cover line after %d of the header's %d settings", len(p.Settings), nSettings)
			},
		})
		if err != nil {
			return nil, err
		}
		if !haveText || !haveK {
			return nil, cr.fail(cr.line, entry, "a setting line needs \"setting\" and \"shots\"")
		}
		s, reason := parsePlanSetting(settingText, qubits)
		if reason != "" {
			return nil, cr.fail(cr.line, entry, "%s", reason)
		}
		if l, ok := first[s.Key()]; ok {
			return nil, cr.fail(cr.line, entry, "setting %s repeated (first on line %d); a compact plan lists each setting once", inputcap.Quote(settingText), l)
		}
		first[s.Key()] = cr.line
		if shots < 1 {
			return nil, cr.fail(cr.line, entry, "shot count %d, want at least 1", shots)
		}
		if shots > total-sum {
			return nil, cr.fail(cr.line, entry, "the shots add up to more than the header's total %d", total)
		}
		sum += shots
		if haveDrawn != drawn {
			if drawn {
				return nil, cr.fail(cr.line, entry, "no \"drawn\" terms, but the header says the plan has them")
			}
			return nil, cr.fail(cr.line, entry, "\"drawn\" terms, but the header says the plan has none")
		}
		if drawn {
			if err := cr.drawnPairs(pairs, entry, shots, terms, p); err != nil {
				return nil, err
			}
		}
		if haveSplit {
			if err := cr.splitPairs(split, entry, s, terms, p, sums); err != nil {
				return nil, err
			}
		}
		p.Settings = append(p.Settings, s)
		p.Shots = append(p.Shots, shots)
	}
	if version == CompactSplitPlanVersion {
		if len(p.Split) == 0 {
			return nil, cr.fail(1, "version", "version %d without a \"split\" on any setting line", version)
		}
		for _, i := range sums.order {
			if v := sums.sum[i]; math.Abs(v-1) > 1e-9 {
				return nil, cr.fail(sums.line[i], "split", "the weights of term %d add up to %.17g, want 1", i, v)
			}
		}
	}
	switch {
	case len(p.Settings) != nSettings:
		return nil, cr.fail(cr.line, "settings", "%d setting lines, the header says %d", len(p.Settings), nSettings)
	case sum != total:
		return nil, cr.fail(1, "shots", "total %d, but the settings' shots add up to %d", total, sum)
	case len(p.Cover) != terms:
		return nil, cr.fail(cr.line, "cover", "%d cover counts, the header says %d terms", len(p.Cover), terms)
	}
	f.Plan = p
	return f, nil
}

// drawnPairs checks a setting line's [[term, count], ...] and appends the
// drawn terms to p.Drawn.
func (cr *compactReader) drawnPairs(pairs [][]json.Number, entry string, shots, terms int, p *Plan) error {
	got := 0
	for j, pair := range pairs {
		if len(pair) != 2 {
			return cr.fail(cr.line, entry, "drawn[%d]: want a pair [term, count], found %d numbers", j, len(pair))
		}
		t, err1 := strconv.Atoi(pair[0].String())
		m, err2 := strconv.Atoi(pair[1].String())
		switch {
		case err1 != nil || err2 != nil:
			return cr.fail(cr.line, entry, "drawn[%d]: [%s, %s] is not a pair of integers", j, inputcap.Clip(pair[0].String()), inputcap.Clip(pair[1].String()))
		case t < 0 || t >= terms:
			return cr.fail(cr.line, entry, "drawn[%d]: term %d outside [0, %d)", j, t, terms)
		case m < 1 || m > shots-got:
			return cr.fail(cr.line, entry, "drawn[%d]: count %d, want between 1 and the %d shots not yet drawn", j, m, shots-got)
		}
		got += m
		for range m {
			p.Drawn = append(p.Drawn, t)
		}
	}
	if got != shots {
		return cr.fail(cr.line, entry, "the drawn counts add up to %d, the setting has %d shots", got, shots)
	}
	return nil
}

// coverLine reads one line of cover counts.
func (cr *compactReader) coverLine(text []byte, f *PlanFile, p *Plan, terms, total, nSettings int) error {
	entry := fmt.Sprintf("cover[%d]", len(p.Cover))
	if len(p.Cover) == 0 {
		f.coverLine = cr.line
	}
	var v []json.Number
	have := false
	err := cr.object(text, entry, map[string]func(*json.Decoder) error{
		"cover": func(d *json.Decoder) error { have = true; return d.Decode(&v) },
		"setting": func(*json.Decoder) error {
			return cr.fail(cr.line, "", "a setting line after the header's %d settings", nSettings)
		},
	})
	if err != nil {
		return err
	}
	if !have {
		return cr.fail(cr.line, entry, "after the settings, every line holds \"cover\"")
	}
	for _, n := range v {
		entry := fmt.Sprintf("cover[%d]", len(p.Cover))
		c, err := strconv.Atoi(n.String())
		if err != nil {
			return cr.fail(cr.line, entry, "number %s is not a valid int", inputcap.Clip(n.String()))
		}
		if c < 0 || c > total {
			return cr.fail(cr.line, entry, "cover count %d outside [0, %d]", c, total)
		}
		if len(p.Cover) == terms {
			return cr.fail(cr.line, entry, "more cover counts than the header's %d terms", terms)
		}
		p.Cover = append(p.Cover, c)
		f.cover = append(f.cover, int32(cr.line))
	}
	return nil
}

// parsePlanSetting parses a setting of a plan file, returning the reason
// when it is not a setting of the plan's width.
func parsePlanSetting(text string, qubits int) (pauli.Setting, string) {
	entangled := strings.IndexByte(text, '|') >= 0 // generators joined by '|'
	if !entangled && len(text) != qubits {
		return pauli.Setting{}, fmt.Sprintf("setting %s has %d letters, the plan has %d qubits", inputcap.Quote(text), len(text), qubits)
	}
	s, err := pauli.ParseSetting(text)
	if err != nil {
		var pe *pauli.ParseError
		if errors.As(err, &pe) && !entangled {
			return pauli.Setting{}, fmt.Sprintf("setting %s: %s at qubit %d (want X, Y or Z)", inputcap.Quote(text), pe.Reason, pe.Offset)
		}
		if errors.As(err, &pe) {
			return pauli.Setting{}, fmt.Sprintf("entangled setting %s: %s at offset %d", inputcap.Quote(text), pe.Reason, pe.Offset)
		}
		return pauli.Setting{}, fmt.Sprintf("setting %s: %v", inputcap.Quote(text), err)
	}
	if s.Qubits() != qubits {
		return pauli.Setting{}, fmt.Sprintf("setting %s has %d qubits, the plan has %d", inputcap.Quote(text), s.Qubits(), qubits)
	}
	return s, ""
}

// splitSums adds up the weights of every term a compact plan's split lists,
// remembering the line that first listed it.
type splitSums struct {
	sum   map[int]float64
	line  map[int]int
	order []int
}

// splitPairs checks a setting line's [[term, weight], ...] and appends the
// group to p.Split.
func (cr *compactReader) splitPairs(pairs [][]json.Number, entry string, s pauli.Setting, terms int, p *Plan, sums *splitSums) error {
	gr := hamiltonian.SplitGroup{Setting: s}
	seen := make(map[int]bool, len(pairs))
	for j, pair := range pairs {
		if len(pair) != 2 {
			return cr.fail(cr.line, entry, "split[%d]: want a pair [term, weight], found %d numbers", j, len(pair))
		}
		t, err1 := strconv.Atoi(pair[0].String())
		w, err2 := strconv.ParseFloat(pair[1].String(), 64)
		switch {
		case err1 != nil || err2 != nil:
			return cr.fail(cr.line, entry, "split[%d]: [%s, %s] is not a term and a weight", j, inputcap.Clip(pair[0].String()), inputcap.Clip(pair[1].String()))
		case t < 0 || t >= terms:
			return cr.fail(cr.line, entry, "split[%d]: term %d outside [0, %d)", j, t, terms)
		case seen[t]:
			return cr.fail(cr.line, entry, "split[%d]: term %d listed twice", j, t)
		case !(w >= 0) || math.IsInf(w, 0):
			return cr.fail(cr.line, entry, "split[%d]: term %d has weight %v, want a finite non-negative number", j, t, w)
		}
		seen[t] = true
		if _, ok := sums.line[t]; !ok {
			sums.line[t] = cr.line
			sums.order = append(sums.order, t)
		}
		sums.sum[t] += w
		gr.Terms = append(gr.Terms, t)
		gr.Weights = append(gr.Weights, w)
	}
	if len(gr.Terms) == 0 {
		return cr.fail(cr.line, entry, "an empty \"split\"")
	}
	p.Split = append(p.Split, gr)
	return nil
}
