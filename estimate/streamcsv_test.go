package estimate

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"runtime"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/pauli"
)

// csvText returns the CSV form of the case's shots, in shot order; every
// third line names its setting by index into c.settings, the others spell
// it out.
func (c *streamCase) csvText() []string { return c.csvLines(true) }

// csvLines is csvText, with every setting spelled out if !index.
func (c *streamCase) csvLines(index bool) []string {
	lines := []string{csvHeader}
	for n, k := range c.order {
		set := c.settings[k].String()
		if index && n%3 == 0 {
			set = fmt.Sprint(k)
		}
		lines = append(lines, set+","+string(c.outcomes[n].AppendText(nil, c.h.Qubits())))
	}
	return lines
}

// withProcs runs f with GOMAXPROCS procs and batches of the given number
// of shots, restoring both after.
func withProcs(procs, batch int, f func()) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
	defer func(b int) { csvBatchShots = b }(csvBatchShots)
	csvBatchShots = batch
	f()
}

// bitsEqual compares float64 values by their bits.
var bitsEqual = cmp.Comparer(func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) })

// TestAddCSVMatchesSerial checks that Stream.AddCSV, pipelined or not,
// adds the same shots in the same order as ScanCSV with Stream.Add on one
// goroutine: the results are equal bit for bit, under GOMAXPROCS 1 and 2
// and with batches that split the file many times or not at all, with
// and without a settings list (settings by index, or all spelled out). The
// serial path itself is checked against Grouped and a shot-by-shot
// reference of MATH.md §2 in TestStreamMatchesGrouped.
func TestAddCSVMatchesSerial(t *testing.T) {
	for _, tc := range []struct {
		qubits int
		list   bool
	}{{8, true}, {70, true}, {8, false}} {
		qubits := tc.qubits
		c := newStreamCase(t, qubits, 200, 11)
		text := strings.Join(c.csvLines(tc.list), "\n") + "\n"
		list := c.settings
		if !tc.list {
			list = nil
		}
		serial, err := NewStream(c.h, c.settings, c.shots, nil)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := ScanCSV(strings.NewReader(text), list, serial.Add); err != nil {
			t.Fatal(err)
		}
		want, err := serial.Result()
		if err != nil {
			t.Fatal(err)
		}
		// Grouped on the same records gives the same bits (Stream's
		// contract); a sanity check that the text is the case's shots.
		if g, err := Grouped(c.h, c.rec, nil); err != nil || math.Float64bits(g.Energy) != math.Float64bits(want.Energy) {
			t.Fatalf("qubits %d: Grouped %v (%v), serial stream %v", qubits, g, err, want.Energy)
		}
		for _, procs := range []int{1, 2} {
			for _, batch := range []int{1, 7, 1024} {
				for _, ser := range []bool{false, true} {
					withProcs(procs, batch, func() {
						st, err := NewStream(c.h, c.settings, c.shots, nil)
						if err != nil {
							t.Fatal(err)
						}
						n, err := st.AddCSV(strings.NewReader(text), list, &AddCSVOptions{Serial: ser})
						if err != nil || n != qubits {
							t.Fatalf("qubits %d procs %d batch %d serial %v: AddCSV = %d, %v", qubits, procs, batch, ser, n, err)
						}
						got, err := st.Result()
						if err != nil {
							t.Fatal(err)
						}
						if diff := cmp.Diff(want, got, bitsEqual); diff != "" {
							t.Errorf("qubits %d procs %d batch %d serial %v: result differs (-serial +AddCSV):\n%s", qubits, procs, batch, ser, diff)
						}
					})
				}
			}
		}
	}
}

// failAfter reads from r and fails with err once r is exhausted.
type failAfter struct {
	r   io.Reader
	err error
}

func (f *failAfter) Read(p []byte) (int, error) {
	n, err := f.r.Read(p)
	if err == io.EOF {
		return n, f.err
	}
	return n, err
}

// TestAddCSVErrors checks that the pipelined AddCSV reports the error of
// the serial scan, naming the same line, with the same shots added
// before it: bad lines past several batches, a shot the plan does not
// have (refused by Add on the other goroutine), a read error, and a bad
// line right after one refused by Add (the earlier line wins).
func TestAddCSVErrors(t *testing.T) {
	c := newStreamCase(t, 8, 60, 5)
	lines := c.csvText()
	other := strings.Repeat("X", 7) + "Y" // not among the case's 30 random settings (checked below)
	for _, s := range c.settings {
		if s.String() == other {
			t.Fatal("test setting is in the plan")
		}
	}
	with := func(line int, text ...string) []string {
		out := append([]string(nil), lines[:line-1]...)
		out = append(out, text...)
		return append(out, lines[line-1:]...)
	}
	ioErr := errors.New("disk on fire")
	for _, tc := range []struct {
		name  string
		lines []string
		read  error // returned by the reader after the text
		line  int   // the line named, 0 for the read error
	}{
		{"bad outcome", with(200, "XXXXXXXX,01201100"), nil, 200},
		{"bad setting letter", with(150, "XXQXXXXX,01001100"), nil, 150},
		{"setting not in plan", with(180, other+",01001100"), nil, 180},
		{"index out of range", with(90, "99,01001100"), nil, 90},
		{"refused then bad", with(100, other+",00000000", "XXXXXXXX,2"), nil, 100},
		{"one shot too many", append(append([]string(nil), lines...), lines[1]), nil, len(lines) + 1},
		{"bad header", append([]string{"outcome,setting"}, lines[1:]...), nil, 1},
		{"read error", lines, ioErr, 0},
	} {
		text := strings.Join(tc.lines, "\n") + "\n"
		reader := func() io.Reader {
			if tc.read != nil {
				return &failAfter{strings.NewReader(text), tc.read}
			}
			return strings.NewReader(text)
		}
		serial, err := NewStream(c.h, c.settings, c.shots, nil)
		if err != nil {
			t.Fatal(err)
		}
		_, want := ScanCSV(reader(), c.settings, serial.Add)
		if want == nil {
			t.Fatalf("%s: serial scan accepted the input", tc.name)
		}
		var le *LineError
		if tc.line > 0 && (!errors.As(want, &le) || le.Line != tc.line) {
			t.Fatalf("%s: serial error %v, want one naming line %d", tc.name, want, tc.line)
		}
		if tc.read != nil && !errors.Is(want, tc.read) {
			t.Fatalf("%s: serial error %v, want the read error", tc.name, want)
		}
		for _, procs := range []int{1, 2} {
			withProcs(procs, 7, func() {
				st, err := NewStream(c.h, c.settings, c.shots, nil)
				if err != nil {
					t.Fatal(err)
				}
				_, got := st.AddCSV(reader(), c.settings, nil)
				if got == nil || got.Error() != want.Error() {
					t.Errorf("%s, procs %d: AddCSV error %v, serial %v", tc.name, procs, got, want)
				}
				if tc.line > 0 && !errors.As(got, &le) {
					t.Errorf("%s, procs %d: AddCSV error %v is not a *LineError", tc.name, procs, got)
				}
				if st.Len() != serial.Len() {
					t.Errorf("%s, procs %d: %d shots added before the error, serial %d", tc.name, procs, st.Len(), serial.Len())
				}
			})
		}
	}
}

// endless serves the header, one line of a setting the plan lacks, then
// valid lines forever, counting its reads.
type endless struct {
	buf   bytes.Buffer
	line  string
	reads int
}

func (e *endless) Read(p []byte) (int, error) {
	e.reads++
	for e.buf.Len() < len(p) {
		e.buf.WriteString(e.line)
	}
	return e.buf.Read(p)
}

// TestAddCSVStopsReader checks that an error found by the adding
// goroutine stops the reading one: on an endless input AddCSV returns
// (it would wait forever otherwise), the reader is not read afterwards,
// and no goroutine is left behind.
func TestAddCSVStopsReader(t *testing.T) {
	c := newStreamCase(t, 8, 60, 6)
	withProcs(2, 7, func() {
		st, err := NewStream(c.h, c.settings, c.shots, nil)
		if err != nil {
			t.Fatal(err)
		}
		e := &endless{line: c.settings[1].String() + ",00000000\n"}
		e.buf.WriteString(csvHeader + "\nXXXXXXXY,00000000\n")
		before := runtime.NumGoroutine()
		_, err = st.AddCSV(e, c.settings, nil)
		var le *LineError
		if !errors.As(err, &le) || le.Line != 2 {
			t.Fatalf("AddCSV error %v, want one naming line 2", err)
		}
		reads := e.reads
		if after := runtime.NumGoroutine(); after > before {
			t.Errorf("%d goroutines after AddCSV returned, %d before", after, before)
		}
		runtime.Gosched()
		if e.reads != reads {
			t.Errorf("reader read %d times after AddCSV returned", e.reads-reads)
		}
	})
}

// TestAddCSVNoShotAllocs checks that the pipelined AddCSV allocates a
// fixed amount, not an amount per shot: the allocations of a scan of 10
// times the shots are within those of the short scan plus a margin of
// one allocation per 1000 extra shots.
func TestAddCSVNoShotAllocs(t *testing.T) {
	// Every line of one setting; plans of 2 000 and 20 000 shots.
	s := pauli.MustParseSetting("XYZXYZXY")
	c := newStreamCase(t, 8, 60, 7)
	allocs := func(shots int) float64 {
		text := csvHeader + "\n" + strings.Repeat(s.String()+",01100101\n", shots)
		var res float64
		withProcs(2, 1024, func() {
			res = testing.AllocsPerRun(3, func() {
				st, err := NewStream(c.h, []pauli.Setting{s}, []int{shots}, nil)
				if err != nil {
					t.Fatal(err)
				}
				if _, err := st.AddCSV(strings.NewReader(text), nil, nil); err != nil {
					t.Fatal(err)
				}
			})
		})
		return res
	}
	short, long := allocs(2000), allocs(20000)
	if long > short+18 {
		t.Errorf("%v allocations for 20 000 shots, %v for 2 000: allocation grows with the shots", long, short)
	}
}
