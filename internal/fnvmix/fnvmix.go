// Package fnvmix is a running 64-bit FNV-1a hash fed with 64-bit words, for
// the content fingerprints that plans and certificates carry.
package fnvmix

const (
	offset = 14695981039346656037
	prime  = 1099511628211
)

// Hash is a running 64-bit FNV-1a hash. The zero value is not ready: start
// from [New].
type Hash uint64

// New returns the hash of no bytes (the FNV-1a 64-bit offset basis).
func New() Hash { return offset }

// Word feeds the eight bytes of w, little-endian.
func (f *Hash) Word(w uint64) {
	h := uint64(*f)
	for range 8 {
		h ^= w & 0xff
		h *= prime
		w >>= 8
	}
	*f = Hash(h)
}

// Sum returns the hash of all that was fed so far.
func (f Hash) Sum() uint64 { return uint64(f) }
