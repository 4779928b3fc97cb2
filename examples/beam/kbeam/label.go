package kbeam

import (
	"bytes"
	"cmp"
	"context"
	"encoding/csv"
	"fmt"
	"slices"
	"strconv"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem"
)

// Label adds the labelling of rows to the pipeline: every row is assigned
// to the nearest of the final centers of state (State.Centers, those the
// clustering returns), and WriteLabels writes the result. It returns a
// PCollection of labelled blocks (CSV text, one line per row: the kept
// text, or else the row index, then the cluster and the distance to its
// center).
func Label(s beam.Scope, c Config, rows, state beam.PCollection) (beam.PCollection, error) {
	sp, err := c.spec()
	if err != nil {
		return beam.PCollection{}, err
	}
	return beam.ParDo(s.Scope("kbeam.Label"), &labelFn{Spec: sp}, rows, beam.SideInput{Input: state}), nil
}

// WriteLabels writes labelled blocks from Label to one CSV file at path
// (any registered filesystem): the header (id, "cluster", "distance"),
// then one line per row in the order of the blocks' Seq. A single worker
// writes the file, holding all lines in memory.
func WriteLabels(s beam.Scope, path, id string, labelled beam.PCollection) {
	s = s.Scope("kbeam.WriteLabels")
	grouped := beam.GroupByKey(s, beam.AddFixedKey(s, labelled))
	beam.ParDo0(s, &writeLabelsFn{Path: path, ID: id}, grouped)
}

// labelled is the CSV text of one block's labelled rows.
type labelled struct {
	Seq  uint64
	Text []byte
}

// labelFn labels the rows of each block.
type labelFn struct {
	Spec spec
	sp   space
	st   *State
}

func (f *labelFn) Setup() error {
	sp, err := f.Spec.space()
	f.sp = sp
	return err
}

func (f *labelFn) ProcessElement(b Block, state func(*State) bool, emit func(labelled)) error {
	if f.st == nil {
		var st State
		if !state(&st) {
			return nil // the passes failed or saw no rows (see assignFn)
		}
		if st.Centers == nil {
			return fmt.Errorf("%w: no final centers to label with", ErrInput)
		}
		f.st = &st
	}
	if err := b.check(f.Spec.D); err != nil {
		return err
	}
	d := f.Spec.D
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	rec := make([]string, 3)
	for t := range b.Rows(d) {
		x := b.X[t*d : (t+1)*d]
		j, _ := f.sp.nearest(x, f.st.Centers)
		if b.Keep != nil {
			rec[0] = b.Keep[t]
		} else {
			rec[0] = strconv.FormatUint(b.First+uint64(t), 10)
		}
		rec[1] = strconv.Itoa(j)
		rec[2] = strconv.FormatFloat(f.sp.metric.Distance(x, f.st.Centers[j*d:(j+1)*d]), 'g', -1, 64)
		if err := w.Write(rec); err != nil {
			return err
		}
	}
	w.Flush()
	emit(labelled{Seq: b.Seq, Text: buf.Bytes()})
	return w.Error()
}

// writeLabelsFn writes all labelled blocks to one file.
type writeLabelsFn struct {
	Path, ID string
}

func (f *writeLabelsFn) ProcessElement(ctx context.Context, _ int, blocks func(*labelled) bool) error {
	var all []labelled
	var l labelled
	for blocks(&l) {
		all = append(all, l)
	}
	slices.SortFunc(all, func(a, b labelled) int { return cmp.Compare(a.Seq, b.Seq) })
	fs, err := filesystem.New(ctx, f.Path)
	if err != nil {
		return err
	}
	defer fs.Close()
	wc, err := fs.OpenWrite(ctx, f.Path)
	if err != nil {
		return err
	}
	var head bytes.Buffer
	w := csv.NewWriter(&head)
	_ = w.Write([]string{f.ID, "cluster", "distance"})
	w.Flush()
	if _, err := wc.Write(head.Bytes()); err != nil {
		wc.Close()
		return err
	}
	for _, b := range all {
		if _, err := wc.Write(b.Text); err != nil {
			wc.Close()
			return err
		}
	}
	return wc.Close()
}
