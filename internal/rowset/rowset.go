package rowset

import "math"

// Set is a set of rows compared by value with ==, so −0 equals +0 and a row
// holding NaN equals nothing. It keeps the slices it is given, not copies:
// callers must not modify a row after adding it. The zero value is not
// usable; create a Set with New.
type Set struct {
	buckets map[uint64][][]float64
	n       int
}

// New returns an empty set with room for about capacity rows.
func New(capacity int) *Set {
	return &Set{buckets: make(map[uint64][][]float64, capacity)}
}

// Len returns the number of rows in the set.
func (s *Set) Len() int { return s.n }

// Has reports whether a row equal to x is in the set.
func (s *Set) Has(x []float64) bool {
	for _, y := range s.buckets[hash(x)] {
		if equal(x, y) {
			return true
		}
	}
	return false
}

// Add inserts x unless an equal row is present and reports whether it did.
func (s *Set) Add(x []float64) bool {
	h := hash(x)
	b := s.buckets[h]
	for _, y := range b {
		if equal(x, y) {
			return false
		}
	}
	s.buckets[h] = append(b, x)
	s.n++
	return true
}

// hash hashes the values of x so that rows equal by == hash alike.
func hash(x []float64) uint64 {
	h := uint64(14695981039346656037)
	for _, v := range x {
		h ^= math.Float64bits(v + 0) // + 0 turns −0 into +0
		h *= 1099511628211
		h ^= h >> 29
	}
	return h
}

func equal(x, y []float64) bool {
	if len(x) != len(y) {
		return false
	}
	for i, v := range x {
		if v != y[i] {
			return false
		}
	}
	return true
}
