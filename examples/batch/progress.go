package main

import (
	"fmt"
	"log/slog"
	"math"
	"time"

	"github.com/schollz/progressbar/v3"

	"github.com/centroidlab/centroid/kmeans/stream"
)

// reporter shows the progress of the passes: a bar on a terminal, log
// lines otherwise (one per pass, and one every 10 s during long passes).
type reporter struct {
	env   *env
	log   *slog.Logger
	bar   *progressbar.ProgressBar
	pass  int
	start time.Time
	last  time.Time
}

func newReporter(e *env, log *slog.Logger) *reporter {
	return &reporter{env: e, log: log}
}

// progress is the stream.Settings.Progress hook.
func (r *reporter) progress(p stream.Progress) {
	now := time.Now()
	if p.Pass != r.pass {
		r.pass, r.start, r.last = p.Pass, now, now
		if r.env.terminal {
			if r.bar != nil {
				r.bar.Finish()
			}
			r.bar = progressbar.NewOptions64(p.Total,
				progressbar.OptionSetWriter(r.env.stderr),
				progressbar.OptionShowCount(),
				progressbar.OptionShowIts(),
				progressbar.OptionSetItsString("rows"),
				progressbar.OptionThrottle(100*time.Millisecond),
				progressbar.OptionSetPredictTime(true),
				progressbar.OptionClearOnFinish(),
			)
		}
	}
	desc := fmt.Sprintf("pass %d %s", p.Pass, p.Stage)
	if !math.IsNaN(p.Cost) {
		desc += fmt.Sprintf(" cost %.6g", p.Cost)
	}
	if r.bar != nil {
		r.bar.Describe(desc)
		r.bar.Set64(p.Rows)
		if p.Done {
			r.bar.Finish()
			r.bar = nil
			fmt.Fprintf(r.env.stderr, "%s: %d rows in %s\n", desc, p.Rows, now.Sub(r.start).Round(time.Millisecond))
		}
		return
	}
	if p.Done || now.Sub(r.last) >= 10*time.Second {
		r.last = now
		secs := now.Sub(r.start).Seconds()
		attrs := []any{"pass", p.Pass, "stage", string(p.Stage), "rows", p.Rows, "rows_per_s", math.Round(float64(p.Rows) / math.Max(secs, 1e-9))}
		if !math.IsNaN(p.Cost) {
			attrs = append(attrs, "cost", p.Cost)
		}
		if p.Done {
			r.log.Info("pass done", attrs...)
		} else {
			r.log.Info("pass running", attrs...)
		}
	}
}

// stop removes a bar left by an interrupted pass.
func (r *reporter) stop() {
	if r.bar != nil {
		r.bar.Exit()
		r.bar = nil
	}
}
