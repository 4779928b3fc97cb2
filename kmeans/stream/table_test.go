package stream_test

import (
	"fmt"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/kmeans/stream"
)

func TestReadTable(t *testing.T) {
	doc := "x,y,species\n1,2,setosa\n3,4,virginica\n5,6,setosa\n"
	src, err := stream.NewCSV(strings.NewReader(doc), "t.csv", &stream.Options{Columns: []string{"x", "y"}, Keep: []string{"species"}})
	require.NoError(t, err)
	tab, err := stream.ReadTable(src)
	require.NoError(t, err)
	assert.Equal(t, []int{0, 1, 0}, tab.Truth)
	assert.Equal(t, []string{"setosa", "virginica"}, tab.Classes)
	assert.Equal(t, []string{"x", "y"}, tab.Features)
	assert.Equal(t, []float64{1, 2, 3, 4, 5, 6}, tab.X.RawMatrix().Data)

	// Integer classes are kept as they are.
	src, err = stream.NewCSV(strings.NewReader("x,label\n1,2\n3,0\n"), "t.csv", &stream.Options{Columns: []string{"x"}, Keep: []string{"label"}})
	require.NoError(t, err)
	tab, err = stream.ReadTable(src)
	require.NoError(t, err)
	assert.Equal(t, []int{2, 0}, tab.Truth)

	for _, tc := range []struct {
		doc  string
		o    stream.Options
		err  error
		says string
	}{
		{"x,label\n1,a\n2,\n", stream.Options{Columns: []string{"x"}, Keep: []string{"label"}}, stream.ErrMissing, "t.csv: row 1"},
		{"x,label\n1,a\nq,b\n", stream.Options{Columns: []string{"x"}, Keep: []string{"label"}}, stream.ErrNotNumber, `line 3, column "x"`},
		{"x,label\n1,a\n", stream.Options{Columns: []string{"x"}, Keep: []string{"truth"}}, stream.ErrColumn, `no column "truth"`},
		{"x,label\n1,a\n", stream.Options{Columns: []string{"x"}}, stream.ErrColumn, "no ground-truth column"},
		{"x,label\n", stream.Options{Columns: []string{"x"}, Keep: []string{"label"}}, stream.ErrEmpty, "no data rows"},
	} {
		src, err := stream.NewCSV(strings.NewReader(tc.doc), "t.csv", &tc.o)
		if err == nil {
			_, err = stream.ReadTable(src)
		}
		require.ErrorIs(t, err, tc.err, tc.doc)
		assert.Contains(t, err.Error(), tc.says)
	}
	_, err = stream.ReadCenters(mustCSV(t, "x,y\n"))
	assert.ErrorIs(t, err, stream.ErrEmpty)
}

func mustCSV(t *testing.T, doc string) *stream.CSV {
	src, err := stream.NewCSV(strings.NewReader(doc), "c.csv", nil)
	require.NoError(t, err)
	return src
}

// A labelled benchmark table: features by name, the ground truth as any
// text, published centers from a second file.
func ExampleReadTable() {
	const table = `trips_per_day,weekend_share,planned_as
410,0.15,hub
395,0.18,hub
90,0.60,park
85,0.55,park
`
	src, _ := stream.NewCSV(strings.NewReader(table), "planned.csv", &stream.Options{
		Columns: []string{"trips_per_day", "weekend_share"}, Keep: []string{"planned_as"}})
	tab, err := stream.ReadTable(src)
	if err != nil {
		fmt.Println(err)
		return
	}
	centers, _ := stream.NewCSV(strings.NewReader("trips_per_day,weekend_share\n400,0.16\n88,0.58\n"), "centers.csv", nil)
	tab.Centers, _ = stream.ReadCenters(centers)
	fmt.Println(tab.Truth, tab.Classes, tab.Features)
	r, c := tab.Centers.Dims()
	fmt.Println(r, "centers of", c, "features")
	// Output:
	// [0 0 1 1] [hub park] [trips_per_day weekend_share]
	// 2 centers of 2 features
}
