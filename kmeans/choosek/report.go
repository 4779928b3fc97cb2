package choosek

import (
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"github.com/centroidlab/centroid/validate"
)

// barCells is the width of an agreement bar in characters.
const barCells = 8

// bar draws a score in [0, 1] as a bar of barCells cells, ▇ for filled and
// ▁ for empty, rounded to the nearest cell; NaN gives an empty string.
func bar(score float64) string {
	if math.IsNaN(score) {
		return ""
	}
	full := int(math.Round(clip01(score) * barCells))
	return strings.Repeat("▇", full) + strings.Repeat("▁", barCells-full)
}

// String returns the recommendation: a headline, what each criterion
// prefers and the reasons, one per line.
func (r *Recommendation) String() string {
	var b strings.Builder
	switch {
	case r.K == 1:
		fmt.Fprintf(&b, "recommended k = 1: no cluster structure found\n")
	case r.Clear:
		fmt.Fprintf(&b, "recommended k = %d: combined score %.2f, clear structure\n", r.K, r.Combined)
	default:
		fmt.Fprintf(&b, "recommended k = %d: combined score %.2f, weak evidence\n", r.K, r.Combined)
	}
	for _, p := range r.Preferences {
		if p.K == 0 {
			fmt.Fprintf(&b, "  %-18s  no preference: %s\n", p.By, p.Note)
		} else {
			fmt.Fprintf(&b, "  %-18s  prefers k = %-3d %s\n", p.By, p.K, p.Note)
		}
	}
	for _, s := range r.Reasons {
		fmt.Fprintf(&b, "  %s\n", s)
	}
	return b.String()
}

// WriteTo writes the sweep in three blocks: the evidence per k (cost,
// indices, gap and stability), the agreement of the criteria per k (a bar
// of the combined score and the criteria that rank the k first, the
// recommended k marked ▶ and ks left out by the stability check marked ✗),
// and the recommendation (Recommendation.String). It returns the number of
// bytes written.
func (r *Result) WriteTo(w io.Writer) (int64, error) {
	cw := &tallyWriter{w: w}
	tw := tabwriter.NewWriter(cw, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "k\tcost\tsilhouette\tDavies–Bouldin\tCalinski–Harabasz\tDunn\tgap ± s_k\tmean ARI\tweakest Jaccard\treproduced\t")
	for _, p := range r.Points {
		sil := fmtNum(p.Silhouette.Mean, 3)
		if e := p.Silhouette; e.Hi > e.Lo {
			sil = fmt.Sprintf("%.3f ±%.3f", e.Mean, (e.Hi-e.Lo)/2)
		}
		gap := "–"
		if !math.IsNaN(p.Gap) {
			gap = fmt.Sprintf("%.3f ± %.3f", p.Gap, p.GapSE)
		}
		ari, jac, rep := "–", "–", "–"
		if st := p.Stability; st != nil {
			ari = fmt.Sprintf("%.3f", st.MeanARI)
			jac = fmt.Sprintf("%.3f", st.MinJaccard())
			n := 0
			for _, x := range st.Readings() {
				if x == validate.Reproduced {
					n++
				}
			}
			rep = fmt.Sprintf("%d/%d", n, st.K)
		}
		fmt.Fprintf(tw, "%d\t%.5g\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t\n", p.K, p.Cost, sil,
			fmtNum(p.DaviesBouldin, 3), fmtNum(p.CalinskiHarabasz, 1), fmtNum(p.Dunn, 3), gap, ari, jac, rep)
	}
	if err := tw.Flush(); err != nil {
		return cw.n, err
	}
	if r.SampleRows < r.Rows {
		fmt.Fprintf(cw, "Dunn, stability and the gap statistic on a seeded sample of %d of the %d rows\n", r.SampleRows, r.Rows)
	}

	fmt.Fprintln(cw, "\nagreement: mean of the criteria's scores at k, each in [0, 1] with 1 at that criterion's best k")
	fmt.Fprintf(cw, "  %s %3s  %-*s %s %s\n", " ", "k", barCells+5, "agreement", " ", "ranked first by")
	for _, s := range r.Recommendation.Standings {
		mark := " "
		if s.K == r.Recommendation.K {
			mark = "▶"
		}
		score := "–" + strings.Repeat(" ", barCells+4)
		if !math.IsNaN(s.Combined) {
			score = fmt.Sprintf("%s %.2f", bar(s.Combined), s.Combined)
		}
		note := " "
		if !s.Admissible {
			note = "✗"
		}
		first := make([]string, len(s.First))
		for i, c := range s.First {
			first[i] = c.String()
		}
		line := fmt.Sprintf("  %s %3d  %s %s %s", mark, s.K, score, note, strings.Join(first, ", "))
		fmt.Fprintln(cw, strings.TrimRight(line, " "))
	}
	for _, s := range r.Recommendation.Standings {
		if !s.Admissible {
			fmt.Fprintf(cw, "✗ not admissible: a cluster not reproduced by the resamples (mean Jaccard below %.2g)\n", validate.JaccardPartly)
			break
		}
	}
	_, err := io.WriteString(cw, "\n"+r.Recommendation.String())
	return cw.n, err
}

// fmtNum formats v with the given decimals, or "–" for NaN.
func fmtNum(v float64, decimals int) string {
	if math.IsNaN(v) {
		return "–"
	}
	return fmt.Sprintf("%.*f", decimals, v)
}

// tallyWriter counts the bytes written through it and keeps the first
// error.
type tallyWriter struct {
	w   io.Writer
	n   int64
	err error
}

func (c *tallyWriter) Write(p []byte) (int, error) {
	if c.err != nil {
		return 0, c.err
	}
	n, err := c.w.Write(p)
	c.n += int64(n)
	c.err = err
	return n, err
}
