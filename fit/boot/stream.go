package boot

import "math/rand/v2"

// Stream is a random source that can be re-seeded for each resample without
// allocating. Resample b of a run with seed s always draws the same numbers,
// whichever worker runs it.
type Stream struct {
	pcg rand.PCG
	*rand.Rand
}

// NewStream returns a stream; call Reset before each resample.
func NewStream() *Stream {
	s := &Stream{}
	s.Rand = rand.New(&s.pcg)
	return s
}

// Reset seeds the stream for resample b of a run with the given seed. The two
// 64-bit words of PCG state are SplitMix64 hashes of (seed, b), so that
// neighbouring resamples get unrelated streams (Steele, Lea & Flood 2014,
// "Fast splittable pseudorandom number generators", OOPSLA).
func (s *Stream) Reset(seed uint64, b int) {
	h := splitmix64(seed ^ splitmix64(uint64(b)+0x632be59bd9b4e019))
	s.pcg.Seed(h, splitmix64(h^uint64(b)))
}

func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}
