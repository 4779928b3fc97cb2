package check

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

var errTest = errors.New("test sentinel")

func TestMatrix(t *testing.T) {
	_, _, err := Matrix(nil, errTest)
	require.ErrorIs(t, err, errTest)
	_, _, err = Matrix((*mat.Dense)(nil), errTest)
	require.ErrorIs(t, err, errTest)
	_, _, err = Matrix(&mat.Dense{}, errTest)
	require.ErrorIs(t, err, errTest)
	n, d, err := Matrix(mat.NewDense(3, 2, nil), errTest)
	require.NoError(t, err)
	assert.Equal(t, [2]int{3, 2}, [2]int{n, d})
}

func TestWeights(t *testing.T) {
	sum, err := Weights(nil, 4, errTest)
	require.NoError(t, err)
	assert.Equal(t, 4.0, sum)
	sum, err = Weights([]float64{1, 0, 2.5}, 3, errTest)
	require.NoError(t, err)
	assert.Equal(t, 3.5, sum)
	for _, w := range [][]float64{{1, 2}, {1, -1, 1}, {1, math.NaN(), 1}, {1, math.Inf(1), 1}, {0, 0, 0}, {math.MaxFloat64, math.MaxFloat64, 1}} {
		_, err := Weights(w, 3, errTest)
		require.ErrorIs(t, err, errTest, "%v", w)
	}
}

func TestFiniteAndRowMajor(t *testing.T) {
	err := Finite([]float64{1, 2, 3, math.Inf(-1)}, 2, errTest)
	require.ErrorIs(t, err, errTest)
	assert.Contains(t, err.Error(), "row 1 column 1")
	require.NoError(t, Finite([]float64{1, 2}, 2, errTest))
	require.ErrorIs(t, FiniteRow([]float64{0, math.NaN()}, errTest), errTest)

	a := mat.NewDense(3, 3, []float64{1, 2, 3, 4, 5, 6, 7, 8, 9})
	x, copied := RowMajor(a)
	assert.False(t, copied)
	assert.Same(t, &a.RawMatrix().Data[0], &x[0])
	sub := a.Slice(1, 3, 0, 2)
	x, copied = RowMajor(sub)
	assert.True(t, copied)
	assert.Equal(t, []float64{4, 5, 7, 8}, x)
	x, _ = RowMajor(a.T())
	assert.Equal(t, []float64{1, 4, 7, 2, 5, 8, 3, 6, 9}, x)
}

type valueRecv struct{}

func (valueRecv) M() {}

func TestNilPointer(t *testing.T) {
	var p *valueRecv
	var f func()
	assert.True(t, NilPointer(p))
	assert.True(t, NilPointer(f))
	assert.False(t, NilPointer(nil))
	assert.False(t, NilPointer(valueRecv{}))
	assert.False(t, NilPointer(&valueRecv{}))
}
