package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/assay-project/assay/engine"
)

// Progress display timing: nothing is drawn for runs shorter than
// progressDelay, and the line is redrawn at most once per progressEvery.
const (
	progressDelay = 2 * time.Second
	progressEvery = 250 * time.Millisecond
	progressWidth = 79 // characters, within the 80 columns of the smallest common terminal
)

// showProgress decides whether a run draws a progress bar on standard
// error: only when stderr is a terminal that understands cursor controls,
// outside CI (the CI environment variable, which CI services set), and
// without --quiet.
func showProgress(quiet, terminal bool, getenv func(string) string) bool {
	return !quiet && terminal && getenv("CI") == "" && getenv("TERM") != "dumb"
}

// progressBar draws one line on a terminal, redrawn in place: a bar, the
// share read, the pass, rows and bytes read, the rate and the time left.
type progressBar struct {
	w     io.Writer
	now   func() time.Time
	start time.Time // of the run
	pass  int
	since time.Time // start of the pass
	last  time.Time // of the last drawing
	drawn bool      // a line is on the screen
}

func newProgressBar(w io.Writer, now func() time.Time) *progressBar {
	return &progressBar{w: w, now: now, start: now()}
}

// update takes a report from the engine and redraws the line when the run
// has gone on long enough and the last drawing is old enough, or a new pass
// begins.
func (b *progressBar) update(p engine.Progress) {
	t := b.now()
	newPass := p.Pass != b.pass
	if newPass {
		b.pass, b.since = p.Pass, t
	}
	if t.Sub(b.start) < progressDelay || !newPass && b.drawn && t.Sub(b.last) < progressEvery {
		return
	}
	b.last, b.drawn = t, true
	line := []rune(progressLine(p, t.Sub(b.since)))
	// A line longer than the terminal would wrap, and \r would then
	// redraw only its last part.
	fmt.Fprintf(b.w, "\r%s\x1b[K", string(line[:min(len(line), progressWidth)]))
}

// clear erases the line, if one was drawn.
func (b *progressBar) clear() {
	if b.drawn {
		fmt.Fprint(b.w, "\r\x1b[K")
		b.drawn = false
	}
}

// progressLine writes the state of a pass that has run for elapsed:
//
//	[#####.....]  52% pass 1 · 1,234,567 rows · 418 MB · 52.3 MB/s · 7s left
//
// The share comes from the bytes read, else from the rows when the total is
// known; without either there is no bar and no time left. The rate is in
// bytes a second when bytes are counted, else in rows.
func progressLine(p engine.Progress, elapsed time.Duration) string {
	const barWidth = 10
	share := math.NaN()
	switch {
	case p.Bytes > 0 && p.Size > 0:
		share = float64(p.Bytes) / float64(p.Size)
	case p.TotalRows > 0:
		share = float64(p.Rows) / float64(p.TotalRows)
	}
	var parts []string
	if !math.IsNaN(share) {
		share = min(max(share, 0), 1)
		full := int(share * barWidth)
		parts = append(parts, fmt.Sprintf("[%s%s] %3.0f%%", strings.Repeat("#", full), strings.Repeat(".", barWidth-full), math.Floor(share*100)))
	}
	label := fmt.Sprintf("pass %d", p.Pass)
	if p.Gate {
		label = "writing"
	}
	parts = append(parts, label, thousands(p.Rows)+" rows")
	if p.Bytes > 0 {
		parts = append(parts, byteSize(p.Bytes))
	}
	if secs := elapsed.Seconds(); secs > 0 {
		if p.Bytes > 0 {
			parts = append(parts, byteSize(int64(float64(p.Bytes)/secs))+"/s")
		} else {
			parts = append(parts, thousands(int64(float64(p.Rows)/secs))+" rows/s")
		}
		if !math.IsNaN(share) && share > 0 {
			parts = append(parts, shortDuration(time.Duration((1-share)/share*float64(elapsed)))+" left")
		}
	}
	line := strings.Join(parts, " · ")
	if !math.IsNaN(share) {
		line = strings.Replace(line, " · ", " ", 1) // after the bar
	}
	return line
}

// byteSize writes n bytes in decimal units: 950 B, 12.3 kB, 418 MB, 1.2 GB.
func byteSize(n int64) string {
	units := []string{"B", "kB", "MB", "GB", "TB"}
	v, u := float64(n), 0
	for v >= 1000 && u < len(units)-1 {
		v /= 1000
		u++
	}
	if u == 0 || v >= 100 {
		return fmt.Sprintf("%.0f %s", v, units[u])
	}
	return fmt.Sprintf("%.1f %s", v, units[u])
}

// shortDuration writes d to the second: 7s, 3m05s, 1h02m.
func shortDuration(d time.Duration) string {
	s := int64(math.Round(d.Seconds()))
	switch {
	case s < 60:
		return fmt.Sprintf("%ds", s)
	case s < 3600:
		return fmt.Sprintf("%dm%02ds", s/60, s%60)
	}
	return fmt.Sprintf("%dh%02dm", s/3600, s%3600/60)
}

// thousands writes n with commas between groups of three digits.
func thousands(n int64) string {
	s := strconv.FormatInt(n, 10)
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 && s[i-1] != '-' {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	return b.String()
}
