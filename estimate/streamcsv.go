package estimate

import (
	"errors"
	"io"
	"runtime"

	"github.com/shotplan/shotplan/pauli"
)

// AddCSVOptions controls [Stream.AddCSV]. A nil *AddCSVOptions is the
// zero value.
type AddCSVOptions struct {
	// Serial reads, parses and adds on the calling goroutine alone, as
	// ScanCSV(r, settings, s.Add) does. By default AddCSV does so only
	// when GOMAXPROCS is 1.
	Serial bool
}

// csvBatchShots is the number of shots a batch of [Stream.AddCSV] holds;
// csvBatches is the number of batch buffers in flight. Tests lower
// csvBatchShots to cross many batch boundaries with few shots.
var (
	csvBatchShots = 4096
	csvBatches    = 4
)

// csvBatch is a run of parsed shots handed from the reading goroutine to
// the adding one: shot j < k has setting tab[ids[j]], outcome
// bits[j*w:(j+1)*w] and line lines[j]. tab is the reading goroutine's
// table of settings when the batch was sent (it only appends to it). The
// last batch of a scan carries the scan's qubit count and error.
type csvBatch struct {
	lines []int
	ids   []int32
	tab   []pauli.Setting
	bits  []uint64
	k     int // shots held
	last  bool
	n     int
	err   error
}

// errCSVStopped stops the reading goroutine once the adding one has
// returned; it never leaves AddCSV.
var errCSVStopped = errors.New("estimate: stopped")

// AddCSV reads records in the CSV form, as [ScanCSV], and adds every shot
// to s in the order of the lines. Its result is that of
// ScanCSV(r, settings, s.Add): the same qubit count, the same shots added
// (and so the same sums and [Stream.Result], to the last bit), and on bad
// input the same error naming the line, with the shots before that line
// added.
//
// Unless opts.Serial is set or GOMAXPROCS is 1, the lines are read and
// parsed on a second goroutine, in batches of 4096 shots passed through
// four reused buffers, while the calling goroutine adds them; memory does
// not grow with the number of shots. On an error or at the end, AddCSV
// stops that goroutine and waits for it, so r is not read after AddCSV
// returns (a read already blocked in r is waited for).
func (s *Stream) AddCSV(r io.Reader, settings []pauli.Setting, opts *AddCSVOptions) (int, error) {
	var ids groupIDs
	if (opts != nil && opts.Serial) || runtime.GOMAXPROCS(0) < 2 {
		return scanCSV(r, settings, func(line, _, id int, st pauli.Setting, b pauli.Bits) error {
			if err := s.addID(&ids, id, st, b); err != nil {
				return lineError(line, err.Error())
			}
			return nil
		})
	}
	full := make(chan *csvBatch, csvBatches)
	free := make(chan *csvBatch, csvBatches)
	done := make(chan struct{})
	exited := make(chan struct{})
	for range csvBatches {
		free <- &csvBatch{
			lines: make([]int, csvBatchShots),
			ids:   make([]int32, csvBatchShots),
		}
	}
	go func() {
		defer close(exited)
		var b *csvBatch
		// The settings by id (scanCSV's), capacity clipped so that
		// appending never writes to the caller's array.
		tab := settings[:len(settings):len(settings)]
		get := func() bool {
			select {
			case b = <-free:
				b.k = 0
				return true
			case <-done:
				return false
			}
		}
		if !get() {
			return
		}
		n, err := scanCSV(r, settings, func(line, _, id int, st pauli.Setting, bits pauli.Bits) error {
			if id == len(tab) {
				tab = append(tab, st)
			}
			k, w := b.k, len(bits)
			if len(b.bits) != csvBatchShots*w {
				b.bits = make([]uint64, csvBatchShots*w)
			}
			b.lines[k] = line
			b.ids[k] = int32(id)
			if w == 1 {
				b.bits[k] = bits[0]
			} else {
				copy(b.bits[k*w:(k+1)*w], bits)
			}
			if b.k = k + 1; b.k < csvBatchShots {
				return nil
			}
			b.tab = tab
			select {
			case full <- b:
			case <-done:
				return errCSVStopped
			}
			if !get() {
				return errCSVStopped
			}
			return nil
		})
		if err == errCSVStopped {
			return
		}
		b.last, b.n, b.err, b.tab = true, n, err, tab
		select {
		case full <- b:
		case <-done:
		}
	}()
	defer func() {
		close(done)
		<-exited
	}()
	for {
		b := <-full
		w := 0
		if b.k > 0 {
			w = len(b.bits) / csvBatchShots
		}
		for k, line := range b.lines[:b.k] {
			id := b.ids[k]
			bits := pauli.Bits(b.bits[k*w : (k+1)*w : (k+1)*w])
			var err error
			if int(id) < len(ids) && ids[id] > 0 {
				err = s.sums.AddGroup(ids[id]-1, bits)
			} else {
				err = s.addID(&ids, int(id), b.tab[id], bits)
			}
			if err != nil {
				return 0, lineError(line, err.Error())
			}
		}
		if b.last {
			return b.n, b.err
		}
		free <- b
	}
}

// groupIDs maps the setting ids of scanCSV to the stream's groups: entry
// id is the group's index plus one, 0 while the id has not been met.
type groupIDs []int32

// addID adds a shot of setting st, whose id in the scan is id, as Add
// does (its error without the package prefix), finding the setting's
// group only at the id's first shot.
func (s *Stream) addID(ids *groupIDs, id int, st pauli.Setting, b pauli.Bits) error {
	if id < len(*ids) {
		if g := (*ids)[id]; g > 0 {
			return s.sums.AddGroup(g-1, b)
		}
	}
	gi, ok := s.sums.Group(st)
	if !ok {
		return s.sums.Add(st, b)
	}
	for len(*ids) <= id {
		*ids = append(*ids, 0)
	}
	(*ids)[id] = gi + 1
	return s.sums.AddGroup(gi, b)
}
