package allocate

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// PlanFormat is the value of the "format" key of every plan file, and
// PlanVersion the version of the layout described at [WritePlan].
// SplitPlanVersion is that layout with a "split" key, written for a plan
// with a coefficient split ([Plan].Split); a plan without one is written as
// version 1, byte for byte as before.
const (
	PlanFormat       = "shotplan plan"
	PlanVersion      = 1
	SplitPlanVersion = 3
)

var (
	// ErrPlanFile is wrapped by every error about a malformed plan file.
	ErrPlanFile = errors.New("allocate: malformed plan file")
	// ErrPlanMismatch is wrapped by the errors of [PlanFile.Check]: the plan
	// was not made for the Hamiltonian it is checked against.
	ErrPlanMismatch = errors.New("allocate: plan does not fit the Hamiltonian")
)

// PlanFileError reports a problem with a plan file: the file, the line, the
// entry and what is wrong. Its Err is [ErrPlanFile] or [ErrPlanMismatch]
// (or [ErrPlanTooLarge] for a seed plan [ReadPlan] will not expand).
type PlanFileError struct {
	File   string // the file's path, or "" when read from a reader
	Line   int    // 1-based line of the entry, 0 if not known
	Entry  string // the entry, such as "settings[3]" or "cover[12]"; "" for the whole file
	Reason string // what is wrong
	Err    error
}

func (e *PlanFileError) Error() string {
	b := []byte("allocate: ")
	if e.File != "" {
		b = append(b, e.File...)
		b = append(b, ": "...)
	}
	if e.Line > 0 {
		b = append(b, "line "...)
		b = strconv.AppendInt(b, int64(e.Line), 10)
		b = append(b, ": "...)
	}
	if e.Entry != "" {
		b = append(b, e.Entry...)
		b = append(b, ": "...)
	}
	b = append(b, e.Reason...)
	return string(b)
}

// Unwrap returns ErrPlanFile or ErrPlanMismatch.
func (e *PlanFileError) Unwrap() error { return e.Err }

// PlanFile is a plan as read from a plan file, with the seed of the run that
// made it. It remembers the line of every entry, so that [PlanFile.Check] can
// point at the line that disagrees with a Hamiltonian.
type PlanFile struct {
	// Plan is the plan. Plan.Stats.Strategy holds the file's strategy
	// name; Rounds and Elapsed are not stored and read as zero.
	Plan *Plan
	// Seed is the seed the strategy was given (0 when none was recorded).
	Seed uint64
	// Draw is the seed plan of a file in that layout ([WriteSeedPlan]),
	// nil for the others; Plan is then its expansion, whose Cover is nil
	// until [PlanFile.Check] counts it.
	Draw *SeedPlan

	name       string
	qubitsLine int
	coverLine  int     // line of the "cover" key
	cover      []int32 // line of every cover entry
	drawn      []int32 // line of every drawn entry
	split      []int   // line of every split group
}

// planEntry is one element of a plan file's "settings".
type planEntry struct {
	Setting string `json:"setting"`
	Shots   int    `json:"shots"`
}

// WritePlan writes p to w as a plan file, recording seed as the seed the
// strategy was given. A plan file is a JSON object, written with one setting
// per line so that it reads and diffs well:
//
//	{
//	  "format": "shotplan plan",
//	  "version": 1,
//	  "qubits": 4,
//	  "strategy": "greedy",
//	  "seed": 0,
//	  "shots": 1000,
//	  "settings": [
//	    {"setting": "ZZZZ", "shots": 1},
//	    {"setting": "XXYY", "shots": 1},
//	    ...
//	  ],
//	  "cover": [734, 734, ...],
//	  "drawn": null
//	}
//
// "settings" lists the settings in measurement order with their consecutive
// shot counts (qubit 0 first, as in package pauli); "shots" is their total.
// A plan with a coefficient split ([Plan].Split, MATH.md §2.5) is written as
// version 3 ([SplitPlanVersion]) with one more key, "split", one group a
// line in the split's order:
//
//	"split": [
//	  {"setting": "ZZZZ", "terms": [0, 4], "weights": [0.25, 1]},
//	  ...
//	]
//
// each weight in the shortest form that reads back to the same float64.
// "cover" holds N_i for every term of the Hamiltonian the plan was made for,
// in term order. "drawn" is the term drawn for each shot by strategies that
// draw one (see [TermDrawer]), or null. Keys may come in any order when read.
//
// WritePlan returns an error, and writes nothing, if p is inconsistent: no
// settings, a setting of another width, a shot count below 1, a negative
// cover count, or a drawn list of the wrong length.
func WritePlan(w io.Writer, p *Plan, seed uint64) error {
	if err := validPlan(p); err != nil {
		return err
	}
	var b bytes.Buffer
	b.WriteString("{\n")
	version := PlanVersion
	if len(p.Split) > 0 {
		version = SplitPlanVersion
	}
	fmt.Fprintf(&b, "  \"format\": %q,\n  \"version\": %d,\n", PlanFormat, version)
	fmt.Fprintf(&b, "  \"qubits\": %d,\n", p.Qubits)
	name, _ := json.Marshal(p.Stats.Strategy)
	fmt.Fprintf(&b, "  \"strategy\": %s,\n  \"seed\": %d,\n  \"shots\": %d,\n", name, seed, p.TotalShots())
	b.WriteString("  \"settings\": [\n")
	var line []byte
	for k, s := range p.Settings {
		line = append(line[:0], `    {"setting": "`...)
		line = append(line, s.String()...) // letters only: nothing to escape
		line = append(line, `", "shots": `...)
		line = strconv.AppendInt(line, int64(p.Shots[k]), 10)
		line = append(line, '}')
		if k < len(p.Settings)-1 {
			line = append(line, ',')
		}
		b.Write(append(line, '\n'))
	}
	b.WriteString("  ],\n  \"cover\": ")
	appendInts(&b, p.Cover)
	b.WriteString(",\n  \"drawn\": ")
	if p.Drawn == nil {
		b.WriteString("null")
	} else {
		appendInts(&b, p.Drawn)
	}
	if len(p.Split) > 0 {
		b.WriteString(",\n  \"split\": [\n")
		for g, gr := range p.Split {
			b.WriteString(`    {"setting": "`)
			b.WriteString(gr.Setting.String())
			b.WriteString(`", "terms": `)
			appendInts(&b, gr.Terms)
			b.WriteString(`, "weights": [`)
			for k, w := range gr.Weights {
				if k > 0 {
					b.WriteString(", ")
				}
				b.WriteString(strconv.FormatFloat(w, 'g', -1, 64))
			}
			b.WriteString("]}")
			if g < len(p.Split)-1 {
				b.WriteByte(',')
			}
			b.WriteByte('\n')
		}
		b.WriteString("  ]")
	}
	b.WriteString("\n}\n")
	_, err := w.Write(b.Bytes())
	return err
}

// appendInts writes a JSON array of integers, twenty to a line.
func appendInts(b *bytes.Buffer, v []int) {
	b.WriteByte('[')
	for i, x := range v {
		if i > 0 {
			b.WriteByte(',')
			if i%20 == 0 {
				b.WriteString("\n    ")
			} else {
				b.WriteByte(' ')
			}
		}
		b.WriteString(strconv.Itoa(x))
	}
	b.WriteByte(']')
}

// WritePlanFile writes p to path as a plan file (see [WritePlan]),
// atomically: a failed write leaves any earlier file in place and no partial
// file behind.
func WritePlanFile(path string, p *Plan, seed uint64) error {
	// WritePlan checks p before writing; on its error atomicfile.Write
	// leaves path as it was.
	return atomicfile.Write(path, func(w io.Writer) error { return WritePlan(w, p, seed) })
}

func validPlan(p *Plan) error {
	if p == nil || len(p.Settings) == 0 {
		return errors.New("allocate: writing a plan: no settings")
	}
	if len(p.Shots) != len(p.Settings) {
		return fmt.Errorf("allocate: writing a plan: %d settings but %d shot counts", len(p.Settings), len(p.Shots))
	}
	for k, s := range p.Settings {
		if s.Qubits() != p.Qubits {
			return fmt.Errorf("allocate: writing a plan: setting %d (%s) has %d qubits, the plan %d", k, s, s.Qubits(), p.Qubits)
		}
		if p.Shots[k] < 1 {
			return fmt.Errorf("allocate: writing a plan: setting %d (%s) has %d shots", k, s, p.Shots[k])
		}
	}
	for i, c := range p.Cover {
		if c < 0 {
			return fmt.Errorf("allocate: writing a plan: term %d has cover count %d", i, c)
		}
	}
	if p.Drawn != nil && len(p.Drawn) != p.TotalShots() {
		return fmt.Errorf("allocate: writing a plan: %d drawn terms for %d shots", len(p.Drawn), p.TotalShots())
	}
	for g, gr := range p.Split {
		if gr.Setting.Qubits() != p.Qubits || len(gr.Terms) != len(gr.Weights) {
			return fmt.Errorf("allocate: writing a plan: split group %d (%s) has %d qubits, %d terms and %d weights", g, inputcap.Clip(gr.Setting.String()), gr.Setting.Qubits(), len(gr.Terms), len(gr.Weights))
		}
		for k, w := range gr.Weights {
			if math.IsNaN(w) || math.IsInf(w, 0) || w < 0 {
				return fmt.Errorf("allocate: writing a plan: split group %d (%s): term %d has weight %v", g, inputcap.Clip(gr.Setting.String()), gr.Terms[k], w)
			}
		}
	}
	return nil
}

// MaxShots is the most shots a plan may hold: [ReadPlan] refuses a plan
// above it, and the simulator of package estimate takes no more in one run
// (2^32; it holds 8 bytes an outcome).
const MaxShots = inputcap.MaxShots

// MaxPlanBytes is the most bytes [ReadPlan] and [ReadPlanFile] read
// (256 MiB, a plan with drawn terms for some 40 million shots).
const MaxPlanBytes = 256 << 20

// ReadPlanFile reads a plan file written by [WritePlanFile]; see [ReadPlan].
// Errors name the file.
func ReadPlanFile(path string) (*PlanFile, error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer fh.Close()
	return readPlanFrom(fh, path)
}

// ReadPlan reads a plan file (see [WritePlan] for the layout) and checks it
// on its own: the format and version, a positive qubit count, every setting's
// letters (X, Y or Z) and width, shot counts of at least 1 adding up to
// "shots" and to at most [MaxShots], cover counts between 0 and the total,
// and drawn terms (if any), one per shot, each a term index. A problem is
// reported as a *[PlanFileError] that names the line and the entry and wraps
// [ErrPlanFile]; unknown and repeated keys are errors too. Input that does
// not start with '{' is refused at once, and input beyond [MaxPlanBytes]
// once the cap is reached. Whether the plan fits a Hamiltonian is checked
// by [PlanFile.Check].
//
// ReadPlan reads both layouts: that of [WritePlan] (version 1), read whole
// and capped at [MaxPlanBytes], and the compact one of [WriteCompactPlan]
// (version 2), read line by line in memory proportional to the plan it
// holds (one line at a time, each at most [MaxPlanLineBytes]; the file at
// most MaxPlanBytes). In a compact plan a setting that appears on two lines,
// counts that disagree with the header, and drawn counts that do not add up
// to the setting's shots are errors naming the line. It also reads a seed
// plan ([WriteSeedPlan], version 5) with [ReadSeedPlan] and expands it
// ([PlanFile].Draw holds it); one that would take more than
// [MaxExpandBytes] is a *PlanFileError wrapping [ErrPlanTooLarge] with the
// estimate.
func ReadPlan(r io.Reader) (*PlanFile, error) {
	return readPlanFrom(r, "")
}

func readPlanFrom(r io.Reader, name string) (*PlanFile, error) {
	fail := func(reason string) error {
		return &PlanFileError{File: name, Line: 1, Reason: reason, Err: ErrPlanFile}
	}
	br := bufio.NewReader(r)
	head, _ := br.Peek(4096)
	head = bytes.TrimLeft(bytes.TrimPrefix(head, []byte("\ufeff")), " \t\r\n")
	if len(head) == 0 || head[0] != '{' {
		return nil, fail("not a plan file: a plan file is a JSON object starting with '{'")
	}
	if isCompact(br) {
		return readCompact(br, name)
	}
	if isSeedPlan(br) {
		return readSeedPlanFile(br, name)
	}
	data, err := inputcap.ReadAll(br, MaxPlanBytes)
	if err != nil {
		if errors.Is(err, inputcap.ErrTooLarge) {
			return nil, fail(fmt.Sprintf("%v: the reader's limit is MaxPlanBytes", err))
		}
		return nil, err
	}
	return readPlan(bytes.TrimPrefix(data, []byte("\ufeff")), name)
}

// planReader decodes a plan file token by token, keeping offsets so that
// every error can name its line.
type planReader struct {
	data []byte
	dec  *json.Decoder
	name string
	pos  *inputcap.JSONLines
}

// line returns the 1-based line of byte offset off.
func (pr *planReader) line(off int64) int { return pr.pos.Line(off) }

// valueLine returns the line of the next value.
func (pr *planReader) valueLine() int { return pr.pos.Next() }

func (pr *planReader) fail(line int, entry, format string, args ...any) error {
	return &PlanFileError{File: pr.name, Line: line, Entry: entry, Reason: fmt.Sprintf(format, args...), Err: ErrPlanFile}
}

// jsonFail turns a decoding error into a PlanFileError at the best line known.
func (pr *planReader) jsonFail(line int, entry string, err error) error {
	var se *json.SyntaxError
	if errors.As(err, &se) {
		return pr.fail(pr.line(se.Offset), "", "%v", se)
	}
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		return pr.fail(line, entry, "%s is not a valid %s", te.Value, te.Type)
	}
	if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
		return pr.fail(pr.line(int64(len(pr.data))), "", "unexpected end of file")
	}
	return pr.fail(line, entry, "%v", err)
}

func (pr *planReader) delim(want json.Delim, line int, entry string) error {
	tok, err := pr.dec.Token()
	if err != nil {
		return pr.jsonFail(line, entry, err)
	}
	if d, ok := tok.(json.Delim); !ok || d != want {
		return pr.fail(line, entry, "want %q, found %s", string(want), inputcap.Clip(fmt.Sprint(tok)))
	}
	return nil
}

// ints reads an array of integers (or null, if nullable), recording the line
// of every element. The decoder checks the syntax of the whole value; the
// elements are then scanned directly, which is several times faster than
// decoding them one by one and keeps the line count linear.
func (pr *planReader) ints(key string, nullable bool) (v []int, lines []int32, err error) {
	line := pr.valueLine()
	var raw json.RawMessage
	if err := pr.dec.Decode(&raw); err != nil {
		return nil, nil, pr.jsonFail(line, key, err)
	}
	raw = bytes.TrimSpace(raw)
	if string(raw) == "null" && nullable {
		return nil, nil, nil
	}
	if len(raw) < 2 || raw[0] != '[' {
		return nil, nil, pr.fail(line, key, "want an array of integers, found %.20s", raw)
	}
	v = []int{}
	l := line
	for i := 1; i < len(raw); {
		switch c := raw[i]; {
		case c == '\n':
			l++
			i++
		case c == ' ' || c == '\t' || c == '\r' || c == ',' || c == ']':
			i++
		case c == '-' || (c >= '0' && c <= '9'):
			j := i + 1
			for j < len(raw) && bytes.IndexByte([]byte("0123456789.eE+-"), raw[j]) >= 0 {
				j++
			}
			x, err := strconv.Atoi(string(raw[i:j]))
			if err != nil {
				return nil, nil, pr.fail(l, fmt.Sprintf("%s[%d]", key, len(v)), "number %s is not a valid int", raw[i:j])
			}
			v = append(v, x)
			lines = append(lines, int32(l))
			i = j
		default:
			return nil, nil, pr.fail(l, fmt.Sprintf("%s[%d]", key, len(v)), "want an integer, found %.20s", raw[i:])
		}
	}
	return v, lines, nil
}

// rawPlan is a plan file's keys as read, before the checks that span
// several keys.
type rawPlan struct {
	format                 string
	version                int
	haveQubits, haveShots  bool
	haveSettings, haveCvr  bool
	total                  int
	settingLines           []int
	settingTexts           []string
	shotsLine, versionLine int
	haveSplit              bool
	split                  []splitEntry
	splitLines             []int
}

// splitEntry is one element of a plan file's "split".
type splitEntry struct {
	Setting string    `json:"setting"`
	Terms   []int     `json:"terms"`
	Weights []float64 `json:"weights"`
}

func readPlan(data []byte, name string) (*PlanFile, error) {
	dec := json.NewDecoder(bytes.NewReader(data))
	pr := &planReader{data: data, dec: dec, name: name, pos: inputcap.NewJSONLines(data, dec)}
	pr.dec.DisallowUnknownFields()
	f := &PlanFile{name: name}
	p := &Plan{}
	var raw rawPlan
	if err := pr.readKeys(f, p, &raw); err != nil {
		return nil, err
	}
	if err := pr.checkHeader(f, p, &raw); err != nil {
		return nil, err
	}
	sum, err := pr.parseSettings(p, &raw)
	if err != nil {
		return nil, err
	}
	if err := pr.checkCounts(f, p, &raw, sum); err != nil {
		return nil, err
	}
	if err := pr.parseSplit(f, p, &raw); err != nil {
		return nil, err
	}
	f.Plan = p
	return f, nil
}

// readKeys reads the plan file's object key by key.
func (pr *planReader) readKeys(f *PlanFile, p *Plan, raw *rawPlan) error {
	if err := pr.delim('{', 1, ""); err != nil {
		return err
	}
	seen := map[string]bool{}
	for pr.dec.More() {
		tok, err := pr.dec.Token()
		if err != nil {
			return pr.jsonFail(pr.valueLine(), "", err)
		}
		key, _ := tok.(string)
		line := pr.valueLine()
		if seen[key] {
			return pr.fail(line, key, "key repeated")
		}
		seen[key] = true
		switch key {
		case "format":
			err = pr.dec.Decode(&raw.format)
		case "version":
			raw.versionLine = line
			err = pr.dec.Decode(&raw.version)
		case "qubits":
			f.qubitsLine, raw.haveQubits = line, true
			err = pr.dec.Decode(&p.Qubits)
		case "strategy":
			err = pr.dec.Decode(&p.Stats.Strategy)
		case "seed":
			err = pr.dec.Decode(&f.Seed)
		case "shots":
			raw.shotsLine, raw.haveShots = line, true
			err = pr.dec.Decode(&raw.total)
		case "settings":
			raw.haveSettings = true
			err = pr.settingEntries(line, p, raw)
		case "cover":
			f.coverLine, raw.haveCvr = line, true
			p.Cover, f.cover, err = pr.ints(key, false)
		case "drawn":
			p.Drawn, f.drawn, err = pr.ints(key, true)
		case "split":
			raw.haveSplit = true
			err = pr.splitEntries(line, raw)
		default:
			return pr.fail(line, "", "unknown key %s", inputcap.Quote(key))
		}
		if err != nil {
			var pe *PlanFileError
			if errors.As(err, &pe) {
				return err
			}
			return pr.jsonFail(line, key, err)
		}
	}
	if _, err := pr.dec.Token(); err != nil {
		return pr.jsonFail(pr.valueLine(), "", err)
	}
	if _, err := pr.dec.Token(); err != io.EOF {
		return pr.fail(pr.valueLine(), "", "text after the closing brace")
	}
	return nil
}

// settingEntries reads the "settings" array.
func (pr *planReader) settingEntries(line int, p *Plan, raw *rawPlan) error {
	if err := pr.delim('[', line, "settings"); err != nil {
		return err
	}
	for pr.dec.More() {
		l := pr.valueLine()
		entry := fmt.Sprintf("settings[%d]", len(raw.settingTexts))
		var e planEntry
		if err := pr.dec.Decode(&e); err != nil {
			return pr.jsonFail(l, entry, err)
		}
		raw.settingTexts = append(raw.settingTexts, e.Setting)
		raw.settingLines = append(raw.settingLines, l)
		p.Shots = append(p.Shots, e.Shots)
	}
	_, err := pr.dec.Token()
	return err
}

// checkHeader checks the format, version and the presence of the keys.
func (pr *planReader) checkHeader(f *PlanFile, p *Plan, raw *rawPlan) error {
	if raw.format != PlanFormat {
		return pr.fail(1, "format", "not a plan file (format %s, want %q)", inputcap.Quote(raw.format), PlanFormat)
	}
	if raw.version != PlanVersion && raw.version != SplitPlanVersion {
		if raw.version == CompactPlanVersion {
			return pr.fail(raw.versionLine, "version", "version %d in the layout of version %d: a compact plan has its whole header on the first line", raw.version, PlanVersion)
		}
		return pr.fail(raw.versionLine, "version", "version %d, this reader knows versions %d, %d, %d, %d and %d", raw.version, PlanVersion, CompactPlanVersion, SplitPlanVersion, CompactSplitPlanVersion, SeedPlanVersion)
	}
	if raw.haveSplit != (raw.version == SplitPlanVersion) {
		if raw.haveSplit {
			return pr.fail(raw.versionLine, "version", "a \"split\" key needs version %d, the file has version %d", SplitPlanVersion, raw.version)
		}
		return pr.fail(raw.versionLine, "version", "version %d without a \"split\" key", SplitPlanVersion)
	}
	switch {
	case !raw.haveQubits:
		return pr.fail(0, "", "no \"qubits\" key")
	case !raw.haveSettings:
		return pr.fail(0, "", "no \"settings\" key")
	case !raw.haveCvr:
		return pr.fail(0, "", "no \"cover\" key")
	}
	if p.Qubits < 1 || p.Qubits >= hamiltonian.MaxReadQubits {
		return pr.fail(f.qubitsLine, "qubits", "qubit count %d out of range [1, %d)", p.Qubits, hamiltonian.MaxReadQubits)
	}
	if len(raw.settingTexts) == 0 {
		return pr.fail(0, "settings", "no settings")
	}
	return nil
}

// parseSettings parses every setting and its shot count, and returns the
// total, at most MaxShots.
func (pr *planReader) parseSettings(p *Plan, raw *rawPlan) (int, error) {
	sum := 0
	p.Settings = make([]pauli.Setting, len(raw.settingTexts))
	for k, text := range raw.settingTexts {
		entry := fmt.Sprintf("settings[%d]", k)
		line := raw.settingLines[k]
		entangled := strings.IndexByte(text, '|') >= 0 // generators joined by '|'
		if !entangled && len(text) != p.Qubits {
			return 0, pr.fail(line, entry, "setting %s has %d letters, the plan has %d qubits", inputcap.Quote(text), len(text), p.Qubits)
		}
		s, err := pauli.ParseSetting(text)
		if err != nil {
			var pe *pauli.ParseError
			if errors.As(err, &pe) && !entangled {
				return 0, pr.fail(line, entry, "setting %s: %s at qubit %d (want X, Y or Z)", inputcap.Quote(text), pe.Reason, pe.Offset)
			}
			if errors.As(err, &pe) {
				return 0, pr.fail(line, entry, "entangled setting %s: %s at offset %d", inputcap.Quote(text), pe.Reason, pe.Offset)
			}
			return 0, pr.fail(line, entry, "setting %s: %v", inputcap.Quote(text), err)
		}
		if s.Qubits() != p.Qubits {
			return 0, pr.fail(line, entry, "setting %s has %d qubits, the plan has %d", inputcap.Quote(text), s.Qubits(), p.Qubits)
		}
		if p.Shots[k] < 1 {
			return 0, pr.fail(line, entry, "shot count %d, want at least 1", p.Shots[k])
		}
		if p.Shots[k] > MaxShots-sum {
			return 0, pr.fail(line, entry, "the shots add up to more than %d, the most a plan may hold (MaxShots)", MaxShots)
		}
		p.Settings[k] = s
		sum += p.Shots[k]
	}
	return sum, nil
}

// checkCounts checks the total, the cover counts and the drawn terms.
func (pr *planReader) checkCounts(f *PlanFile, p *Plan, raw *rawPlan, sum int) error {
	if raw.haveShots && raw.total != sum {
		return pr.fail(raw.shotsLine, "shots", "total %d, but the settings' shots add up to %d", raw.total, sum)
	}
	for i, c := range p.Cover {
		if c < 0 || c > sum {
			return pr.fail(int(f.cover[i]), fmt.Sprintf("cover[%d]", i), "cover count %d outside [0, %d]", c, sum)
		}
	}
	if p.Drawn != nil {
		if len(p.Drawn) != sum {
			return pr.fail(0, "drawn", "%d drawn terms for %d shots", len(p.Drawn), sum)
		}
		for n, d := range p.Drawn {
			if d < 0 || d >= len(p.Cover) {
				return pr.fail(int(f.drawn[n]), fmt.Sprintf("drawn[%d]", n), "term %d outside [0, %d)", d, len(p.Cover))
			}
		}
	}
	return nil
}

// Check reports whether the plan fits h: the same number of qubits, a cover
// count for every term, and cover counts equal to those the settings give
// on h's terms (so the plan was made for h, or for a Hamiltonian with the
// same strings). For a plan with drawn terms it also checks that every shot's
// setting covers the term drawn for it, and for a plan with a split that it
// passes [hamiltonian.Split.Check] (every group's setting covers its terms).
// A problem is a *[PlanFileError] wrapping [ErrPlanMismatch], naming the
// line of the plan file. For a seed plan ([PlanFile].Draw) it compares the
// width, the term count and the fingerprint of the terms (and importance
// sampling's weights with |h_i|), then counts the cover counts into
// Plan.Cover.
func (f *PlanFile) Check(h *hamiltonian.Hamiltonian) error {
	if f.Draw != nil {
		return f.checkSeed(h)
	}
	p := f.Plan
	fail := func(line int, entry, format string, args ...any) error {
		return &PlanFileError{File: f.name, Line: line, Entry: entry, Reason: fmt.Sprintf(format, args...), Err: ErrPlanMismatch}
	}
	if p.Qubits != h.Qubits() {
		return fail(f.qubitsLine, "qubits", "the plan is for %d qubits, the Hamiltonian has %d", p.Qubits, h.Qubits())
	}
	if len(p.Cover) != h.Len() {
		return fail(f.coverLine, "cover", "the plan counts covers of %d terms, the Hamiltonian has %d", len(p.Cover), h.Len())
	}
	cover, err := CoverCounts(h, p.Settings, p.Shots)
	if err != nil {
		return fail(0, "", "%v", err)
	}
	return f.CheckCover(h, cover)
}

// CheckCover is [PlanFile.Check] with the cover counts of the plan's
// settings on h already computed (for example a certificate's), so that
// they are not counted twice; cover[i] must be term i's count.
func (f *PlanFile) CheckCover(h *hamiltonian.Hamiltonian, cover []int) error {
	p := f.Plan
	fail := func(line int, entry, format string, args ...any) error {
		return &PlanFileError{File: f.name, Line: line, Entry: entry, Reason: fmt.Sprintf(format, args...), Err: ErrPlanMismatch}
	}
	if p.Qubits != h.Qubits() {
		return fail(f.qubitsLine, "qubits", "the plan is for %d qubits, the Hamiltonian has %d", p.Qubits, h.Qubits())
	}
	if len(p.Cover) != h.Len() || len(cover) != h.Len() {
		return fail(f.coverLine, "cover", "the plan counts covers of %d terms, the Hamiltonian has %d", len(p.Cover), h.Len())
	}
	for i, c := range cover {
		if c != p.Cover[i] {
			return fail(f.lineOf(f.cover, i, f.coverLine), fmt.Sprintf("cover[%d]", i),
				"the plan says term %d is covered %d times, its settings cover %s %d times (a plan for another Hamiltonian?)",
				i, p.Cover[i], h.Pauli(i), c)
		}
	}
	if err := p.Split.Check(h, p.Settings, p.Shots); err != nil {
		line := 0
		if len(f.split) > 0 {
			line = f.split[0]
		}
		return fail(line, "split", "%v", err)
	}
	if p.Drawn != nil {
		n := 0
		for k, s := range p.Settings {
			for range p.Shots[k] {
				if d := p.Drawn[n]; !s.Covers(h.Pauli(d)) {
					return fail(f.lineOf(f.drawn, n, 0), fmt.Sprintf("drawn[%d]", n),
						"shot %d drew term %d (%s), which its setting %s does not cover", n, d, h.Pauli(d), s)
				}
				n++
			}
		}
	}
	return nil
}

func (f *PlanFile) lineOf(lines []int32, i, fallback int) int {
	if i < len(lines) {
		return int(lines[i])
	}
	return fallback
}

// splitEntries reads the "split" array, recording the line of every group.
func (pr *planReader) splitEntries(line int, raw *rawPlan) error {
	if err := pr.delim('[', line, "split"); err != nil {
		return err
	}
	for pr.dec.More() {
		l := pr.valueLine()
		var e splitEntry
		if err := pr.dec.Decode(&e); err != nil {
			return pr.jsonFail(l, fmt.Sprintf("split[%d]", len(raw.split)), err)
		}
		raw.split = append(raw.split, e)
		raw.splitLines = append(raw.splitLines, l)
	}
	_, err := pr.dec.Token()
	return err
}

// parseSplit checks the split on its own — every group's setting is one of
// the plan's, once; terms index the cover counts, once per group, with as
// many weights, each finite and non-negative; the weights of every listed
// term add up to one — and stores it in p. Whether each setting covers its
// terms needs the Hamiltonian: [PlanFile.Check].
func (pr *planReader) parseSplit(f *PlanFile, p *Plan, raw *rawPlan) error {
	if !raw.haveSplit {
		return nil
	}
	if len(raw.split) == 0 {
		return pr.fail(raw.versionLine, "split", "no groups")
	}
	inPlan := make(map[string]bool, len(p.Settings))
	for _, s := range p.Settings {
		inPlan[s.Key()] = true
	}
	seen := make(map[string]int)
	sum := make([]float64, len(p.Cover))
	listed := make([]bool, len(p.Cover))
	mark := make([]int, len(p.Cover))
	f.split = raw.splitLines
	for g, e := range raw.split {
		line, entry := raw.splitLines[g], fmt.Sprintf("split[%d]", g)
		s, err := pauli.ParseSetting(e.Setting)
		if err != nil || s.Qubits() != p.Qubits {
			return pr.fail(line, entry, "setting %s is not a setting of %d qubits", inputcap.Quote(e.Setting), p.Qubits)
		}
		key := s.Key()
		if !inPlan[key] {
			return pr.fail(line, entry, "setting %s is not one of the plan's settings", inputcap.Quote(e.Setting))
		}
		if j, ok := seen[key]; ok {
			return pr.fail(line, entry, "setting %s already has group split[%d]", inputcap.Quote(e.Setting), j)
		}
		seen[key] = g
		if len(e.Terms) != len(e.Weights) {
			return pr.fail(line, entry, "%d terms but %d weights", len(e.Terms), len(e.Weights))
		}
		if len(e.Terms) == 0 {
			return pr.fail(line, entry, "a group with no terms")
		}
		for k, i := range e.Terms {
			if i < 0 || i >= len(p.Cover) {
				return pr.fail(line, entry, "term %d outside [0, %d)", i, len(p.Cover))
			}
			if mark[i] == g+1 {
				return pr.fail(line, entry, "term %d listed twice", i)
			}
			mark[i] = g + 1
			if w := e.Weights[k]; !(w >= 0) || math.IsInf(w, 0) {
				return pr.fail(line, entry, "term %d has weight %v, want a finite non-negative number", i, w)
			}
			sum[i] += e.Weights[k]
			listed[i] = true
		}
		p.Split = append(p.Split, hamiltonian.SplitGroup{Setting: s, Terms: e.Terms, Weights: e.Weights})
	}
	for i, ok := range listed {
		if ok && math.Abs(sum[i]-1) > 1e-9 {
			return pr.fail(raw.splitLines[0], "split", "the weights of term %d add up to %.17g, want 1", i, sum[i])
		}
	}
	return nil
}
