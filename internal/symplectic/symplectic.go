// Package symplectic reads one qubit of a Pauli string stored as symplectic
// bit words: bit q%64 of word q/64 of x and of z, the layout of
// pauli.String, pauli.Table rows and every word-wise hot loop of the module.
// It is the one place that reads a qubit's letter from the words; pauli
// turns the code into a Letter.
package symplectic

// Code returns x_q | z_q<<1 for qubit q of the words x, z: 0 for I, 1 for
// X, 2 for Z, 3 for Y. It is small enough to be inlined into the callers'
// loops.
func Code(x, z []uint64, q int) uint {
	return uint(x[q>>6]>>(q&63)&1 | (z[q>>6]>>(q&63)&1)<<1)
}
