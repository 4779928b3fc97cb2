package validate

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// This file holds the contingency table that every external index (one that
// compares two labellings of the same rows) is computed from.
//
// Label conventions shared by all external indices: a labelling is a []int
// with one entry per row; values must be ≥ 0 but need not be contiguous or
// start at 0 ({3, 3, 17, 900} is a valid two-cluster labelling). Only which
// rows share a value matters, so renaming the labels of either argument
// never changes an index. Inputs are never modified.

// Cell is one non-zero entry of a Table: Count rows carry the Row-th label
// of the first labelling and the Col-th label of the second.
type Cell struct {
	Row, Col, Count int
}

// Table is the contingency table of two labellings a and b of the same N
// rows: entry (i, j) counts the rows whose label in a is RowLabel(i) and
// whose label in b is ColLabel(j). Rows and columns are indexed by the
// distinct label values in ascending order, so a labelling that uses 0..k-1
// gets row (or column) i for label i.
//
// Only the non-zero cells are stored, so two labellings that put every row
// in its own cluster cost O(N), not O(N²), memory.
//
// A Table is immutable and safe for concurrent use by multiple goroutines.
// Its String method prints the full table with row and column sums.
type Table struct {
	rowLabels, colLabels []int
	rowSums, colSums     []int
	n                    int
	cells                []Cell // non-zero, sorted by Row then Col
	rowStart             []int  // cells of row i are cells[rowStart[i]:rowStart[i+1]]
}

// Contingency returns the contingency table of the labellings a and b
// (rows of the table follow a, columns follow b).
//
// Labels must be ≥ 0 and need not be contiguous. It returns an error
// wrapping ErrEmpty if a or b is empty, ErrLength if their lengths differ
// and ErrLabel if a label is negative. For R distinct labels in a and C in
// b it runs in O(N + R + C) time plus the sort of the distinct columns met
// in each row (sparse label values such as 10⁹ add an O(N log N) sort).
// It allocates O(N + R + C); labels up to about 2N use a lookup array.
func Contingency(a, b []int) (*Table, error) {
	return contingency("a", "b", a, b)
}

// Dims returns the number of distinct labels in a (rows) and in b
// (columns).
func (t *Table) Dims() (r, c int) { return len(t.rowLabels), len(t.colLabels) }

// At returns the number of rows labelled RowLabel(i) in a and ColLabel(j)
// in b. It panics if i or j is out of range.
func (t *Table) At(i, j int) int {
	if i < 0 || i >= len(t.rowLabels) || j < 0 || j >= len(t.colLabels) {
		panic(fmt.Sprintf("validate: Table.At(%d, %d) out of range for a %d×%d table", i, j, len(t.rowLabels), len(t.colLabels)))
	}
	row := t.cells[t.rowStart[i]:t.rowStart[i+1]]
	k, ok := slices.BinarySearchFunc(row, j, func(c Cell, j int) int { return c.Col - j })
	if !ok {
		return 0
	}
	return row[k].Count
}

// RowLabel returns the label value of a that row i stands for. It panics if
// i is out of range.
func (t *Table) RowLabel(i int) int { return t.rowLabels[i] }

// ColLabel returns the label value of b that column j stands for. It panics
// if j is out of range.
func (t *Table) ColLabel(j int) int { return t.colLabels[j] }

// RowSum returns the number of rows labelled RowLabel(i) in a. It panics if
// i is out of range.
func (t *Table) RowSum(i int) int { return t.rowSums[i] }

// ColSum returns the number of rows labelled ColLabel(j) in b. It panics if
// j is out of range.
func (t *Table) ColSum(j int) int { return t.colSums[j] }

// Total returns N, the number of rows both labellings label.
func (t *Table) Total() int { return t.n }

// Cells returns a copy of the non-zero cells in row-major order.
func (t *Table) Cells() []Cell { return slices.Clone(t.cells) }

// String formats the table with the label values as headers, right-aligned
// counts and a final row and column of sums, for example
//
//	a\b  0  1  2  sum
//	  0  2  1  .    3
//	  1  .  1  2    3
//	sum  2  2  2    6
//
// Zero counts print as ".". The output has R+2 lines of C+2 fields.
func (t *Table) String() string {
	r, c := t.Dims()
	grid := make([][]string, r+2)
	grid[0] = append(grid[0], `a\b`)
	for _, v := range t.colLabels {
		grid[0] = append(grid[0], strconv.Itoa(v))
	}
	grid[0] = append(grid[0], "sum")
	for i := range r {
		line := make([]string, c+2)
		line[0] = strconv.Itoa(t.rowLabels[i])
		for j := range c {
			line[j+1] = "."
		}
		for _, cell := range t.cells[t.rowStart[i]:t.rowStart[i+1]] {
			line[cell.Col+1] = strconv.Itoa(cell.Count)
		}
		line[c+1] = strconv.Itoa(t.rowSums[i])
		grid[i+1] = line
	}
	last := []string{"sum"}
	for _, s := range t.colSums {
		last = append(last, strconv.Itoa(s))
	}
	grid[r+1] = append(last, strconv.Itoa(t.n))

	width := make([]int, c+2)
	for _, line := range grid {
		for j, f := range line {
			width[j] = max(width[j], len(f))
		}
	}
	var sb strings.Builder
	for _, line := range grid {
		for j, f := range line {
			if j > 0 {
				sb.WriteString("  ")
			}
			sb.WriteString(strings.Repeat(" ", width[j]-len(f)))
			sb.WriteString(f)
		}
		sb.WriteByte('\n')
	}
	return sb.String()
}

// identical reports whether the two labellings are the same partition up to
// renaming: every row of the table has exactly one cell and that cell holds
// the whole row and the whole column.
func (t *Table) identical() bool {
	if len(t.rowLabels) != len(t.colLabels) || len(t.cells) != len(t.rowLabels) {
		return false
	}
	for _, c := range t.cells {
		if c.Count != t.rowSums[c.Row] || c.Count != t.colSums[c.Col] {
			return false
		}
	}
	return true
}

// contingency checks a pair of labellings and builds their table; aName and
// bName name the arguments in error messages.
func contingency(aName, bName string, a, b []int) (*Table, error) {
	if len(a) == 0 || len(b) == 0 {
		return nil, fmt.Errorf("%w: %s has %d rows and %s has %d", ErrEmpty, aName, len(a), bName, len(b))
	}
	if len(a) != len(b) {
		return nil, fmt.Errorf("%w: %s has %d rows but %s has %d", ErrLength, aName, len(a), bName, len(b))
	}
	ca, va, err := labelCodes(aName, a)
	if err != nil {
		return nil, err
	}
	cb, vb, err := labelCodes(bName, b)
	if err != nil {
		return nil, err
	}
	return tableFromCodes(ca, cb, va, vb), nil
}

// labelCodes maps every label to the rank of its value among the distinct
// values of labels (ascending) and returns the ranks and the distinct
// values. A negative label is an error wrapping ErrLabel.
func labelCodes(name string, labels []int) (codes, values []int, err error) {
	hi := 0
	for i, v := range labels {
		if v < 0 {
			return nil, nil, fmt.Errorf("%w: %s[%d] = %d", ErrLabel, name, i, v)
		}
		hi = max(hi, v)
	}
	codes = make([]int, len(labels))
	if hi < 2*len(labels)+64 {
		// Dense labels (the usual 0..k-1): a lookup array, O(N + max).
		rank := make([]int, hi+1) // 0 = unused, else code+1
		for _, v := range labels {
			rank[v] = 1
		}
		for v, used := range rank {
			if used != 0 {
				values = append(values, v)
				rank[v] = len(values)
			}
		}
		for i, v := range labels {
			codes[i] = rank[v] - 1
		}
		return codes, values, nil
	}
	// Sparse label values: sort the distinct values, O(N log N).
	values = slices.Compact(slices.Sorted(slices.Values(labels)))
	for i, v := range labels {
		codes[i], _ = slices.BinarySearch(values, v)
	}
	return codes, values, nil
}

// tableFromCodes builds the table of two code slices of equal length whose
// codes index rowLabels and colLabels. It counts in O(N + R + C) plus the
// sort of each row's distinct columns.
func tableFromCodes(ca, cb, rowLabels, colLabels []int) *Table {
	r, c := len(rowLabels), len(colLabels)
	t := &Table{
		rowLabels: rowLabels,
		colLabels: colLabels,
		rowSums:   make([]int, r),
		colSums:   make([]int, c),
		n:         len(ca),
		rowStart:  make([]int, r+1),
	}
	for k, i := range ca {
		t.rowSums[i]++
		t.colSums[cb[k]]++
	}
	// Counting sort of the row positions by their code in a.
	next := make([]int, r)
	for i := 1; i < r; i++ {
		next[i] = next[i-1] + t.rowSums[i-1]
	}
	order := make([]int, len(ca))
	for k, i := range ca {
		order[next[i]] = k
		next[i]++
	}
	count := make([]int, c)
	var touched []int
	pos := 0
	for i := range r {
		t.rowStart[i] = len(t.cells)
		touched = touched[:0]
		for _, k := range order[pos : pos+t.rowSums[i]] {
			j := cb[k]
			if count[j] == 0 {
				touched = append(touched, j)
			}
			count[j]++
		}
		pos += t.rowSums[i]
		slices.Sort(touched)
		for _, j := range touched {
			t.cells = append(t.cells, Cell{Row: i, Col: j, Count: count[j]})
			count[j] = 0
		}
	}
	t.rowStart[r] = len(t.cells)
	return t
}
