package validate

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// CentroidIndex returns the centroid index CI of two sets of cluster
// centers, one center per row (P. Fränti, M. Rezaei, Q. Zhao, "Centroid
// index: cluster level similarity measure", Pattern Recognition
// 47(9):3034–3045, 2014). Every center of a is mapped to its nearest center
// of b (Euclidean distance); the centers of b that no center of a maps to are
// orphans, and CI1(a→b) is their number. The index is
//
//	CI = max(CI1(a→b), CI1(b→a))
//
// It counts the clusters that one solution has allocated differently from the
// other: 0 means the two sets match cluster for cluster (the usual success
// criterion on benchmark data with known centers), and each missing or
// doubled cluster adds about one. It is symmetric, ignores the order of the
// rows, and allows a and b to have different numbers of centers (CI is then
// at least the difference). Ties go to the center with the lower row index.
// Coordinates are rescaled by a power of two before the squared distances
// are summed, so huge or tiny values neither overflow nor underflow and the
// nearest center is unchanged. It costs O(kₐ·k_b·d) and allocates O(kₐ+k_b).
//
// It returns an error wrapping ErrEmpty if a or b is nil or has no rows,
// ErrLength if their numbers of columns differ and ErrNotFinite if a value
// is NaN or ±Inf. The matrices are not modified.
func CentroidIndex(a, b *mat.Dense) (int, error) {
	if err := checkCenterSet("a", a); err != nil {
		return 0, err
	}
	if err := checkCenterSet("b", b); err != nil {
		return 0, err
	}
	_, da := a.Dims()
	_, db := b.Dims()
	if da != db {
		return 0, fmt.Errorf("%w: a has %d columns but b has %d", ErrLength, da, db)
	}
	scale := math.Max(maxAbs(a), maxAbs(b))
	if scale > 0 {
		_, e := math.Frexp(scale)
		scale = math.Ldexp(1, -max(e, -1000)) // 2^1000 at most: no overflow for subnormal input
	} else {
		scale = 1
	}
	return max(orphanCount(a, b, scale), orphanCount(b, a, scale)), nil
}

// checkCenterSet rejects a nil, empty or non-finite center matrix.
func checkCenterSet(name string, c *mat.Dense) error {
	if c == nil || c.IsEmpty() {
		return fmt.Errorf("%w: center set %s has no rows", ErrEmpty, name)
	}
	r, d := c.Dims()
	for i := range r {
		for j, v := range c.RawRowView(i)[:d] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%w: %s[%d, %d] = %v", ErrNotFinite, name, i, j, v)
			}
		}
	}
	return nil
}

// maxAbs returns the largest absolute value in c.
func maxAbs(c *mat.Dense) float64 {
	r, d := c.Dims()
	m := 0.0
	for i := range r {
		for _, v := range c.RawRowView(i)[:d] {
			m = math.Max(m, math.Abs(v))
		}
	}
	return m
}

// orphanCount returns CI1(from→to): the number of rows of to that are not
// the nearest row of any row of from. Coordinates are multiplied by scale (a
// power of two) before differencing.
func orphanCount(from, to *mat.Dense, scale float64) int {
	kFrom, d := from.Dims()
	kTo, _ := to.Dims()
	hit := make([]bool, kTo)
	for i := range kFrom {
		x := from.RawRowView(i)[:d]
		best, bestDist := 0, math.Inf(1)
		for j := range kTo {
			y := to.RawRowView(j)[:d]
			var s float64
			for l, v := range x {
				diff := v*scale - y[l]*scale
				s += diff * diff
			}
			if s < bestDist {
				best, bestDist = j, s
			}
		}
		hit[best] = true
	}
	orphans := 0
	for _, h := range hit {
		if !h {
			orphans++
		}
	}
	return orphans
}
