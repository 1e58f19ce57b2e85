package main

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"github.com/assay-project/assay/engine"
)

func TestShowProgress(t *testing.T) {
	tests := []struct {
		quiet, terminal bool
		env             map[string]string
		want            bool
	}{
		{false, true, nil, true},
		{false, true, map[string]string{"TERM": "xterm-256color"}, true},
		{true, true, nil, false},
		{false, false, nil, false},
		{false, true, map[string]string{"CI": "true"}, false},
		{false, true, map[string]string{"CI": "1", "TERM": "xterm"}, false},
		{false, true, map[string]string{"TERM": "dumb"}, false},
	}
	for _, tt := range tests {
		got := showProgress(tt.quiet, tt.terminal, func(k string) string { return tt.env[k] })
		if got != tt.want {
			t.Errorf("showProgress(quiet %v, terminal %v, env %v) = %v, want %v", tt.quiet, tt.terminal, tt.env, got, tt.want)
		}
	}
}

// fakeClock is a clock a test moves by hand.
type fakeClock struct{ t time.Time }

func (c *fakeClock) now() time.Time          { return c.t }
func (c *fakeClock) advance(d time.Duration) { c.t = c.t.Add(d) }

// TestProgressBar drives the bar with a fake clock and terminal: nothing
// in the first two seconds, then at most one drawing per quarter second
// (a new pass is drawn at once), each in place, and the line cleared at
// the end.
func TestProgressBar(t *testing.T) {
	clock := &fakeClock{t: time.Date(2025, 6, 2, 13, 0, 0, 0, time.UTC)}
	var term bytes.Buffer
	bar := newProgressBar(&term, clock.now)
	const mb = 1_000_000
	steps := []struct {
		after time.Duration
		p     engine.Progress
		drawn string // what reaches the terminal, "" for nothing
	}{
		{0, engine.Progress{Pass: 1, Size: 100 * mb, TotalRows: -1}, ""},
		{time.Second, engine.Progress{Pass: 1, Rows: 100_000, Bytes: 10 * mb, Size: 100 * mb, TotalRows: -1}, ""},
		{time.Second, engine.Progress{Pass: 1, Rows: 200_000, Bytes: 20 * mb, Size: 100 * mb, TotalRows: -1},
			"\r[##........]  20% pass 1 · 200,000 rows · 20.0 MB · 10.0 MB/s · 8s left\x1b[K"},
		{100 * time.Millisecond, engine.Progress{Pass: 1, Rows: 210_000, Bytes: 21 * mb, Size: 100 * mb, TotalRows: -1}, ""},
		{200 * time.Millisecond, engine.Progress{Pass: 1, Rows: 230_000, Bytes: 23 * mb, Size: 100 * mb, TotalRows: -1},
			"\r[##........]  23% pass 1 · 230,000 rows · 23.0 MB · 10.0 MB/s · 8s left\x1b[K"},
		{10 * time.Millisecond, engine.Progress{Pass: 2, Size: 100 * mb, TotalRows: 1_000_000},
			"\r[..........]   0% pass 2 · 0 rows\x1b[K"},
		{time.Second, engine.Progress{Pass: 2, Gate: false, Rows: 500_000, Bytes: 0, Size: 100 * mb, TotalRows: 1_000_000},
			"\r[#####.....]  50% pass 2 · 500,000 rows · 500,000 rows/s · 1s left\x1b[K"},
	}
	for i, s := range steps {
		clock.advance(s.after)
		term.Reset()
		bar.update(s.p)
		if got := term.String(); got != s.drawn {
			t.Errorf("step %d: drew\n%q\nwant\n%q", i, got, s.drawn)
		}
	}
	// A line too long for the terminal is cut.
	bar.update(engine.Progress{Pass: 3, Gate: true, Size: 100 * mb, TotalRows: 1_300_000_000_000})
	clock.advance(time.Second)
	term.Reset()
	bar.update(engine.Progress{Pass: 3, Gate: true, Rows: 1_234_567_890_123, Bytes: 99 * mb, Size: 100 * mb, TotalRows: 1_300_000_000_000})
	if got := strings.TrimSuffix(strings.TrimPrefix(term.String(), "\r"), "\x1b[K"); len([]rune(got)) != progressWidth {
		t.Errorf("a long line drew %d characters, want %d: %q", len([]rune(got)), progressWidth, got)
	}
	term.Reset()
	bar.clear()
	if got := term.String(); got != "\r\x1b[K" {
		t.Errorf("clear wrote %q", got)
	}
	term.Reset()
	bar.clear()
	if term.Len() != 0 {
		t.Errorf("a second clear wrote %q", term.String())
	}
}

// TestProgressQuickRun checks that a run shorter than two seconds draws
// nothing, not even when it ends.
func TestProgressQuickRun(t *testing.T) {
	clock := &fakeClock{t: time.Unix(0, 0)}
	var term bytes.Buffer
	bar := newProgressBar(&term, clock.now)
	for pass := 1; pass <= 3; pass++ {
		clock.advance(500 * time.Millisecond)
		bar.update(engine.Progress{Pass: pass, Rows: 10, Bytes: 100, Size: 100, Gate: pass == 3})
	}
	bar.clear()
	if term.Len() != 0 {
		t.Errorf("a 1.5 s run drew %q", term.String())
	}
}

func TestProgressLine(t *testing.T) {
	tests := []struct {
		p       engine.Progress
		elapsed time.Duration
		want    string
	}{
		{engine.Progress{Pass: 1, Rows: 1234567, Bytes: 418 * 1e6, Size: 800 * 1e6, TotalRows: -1}, 8 * time.Second,
			"[#####.....]  52% pass 1 · 1,234,567 rows · 418 MB · 52.2 MB/s · 7s left"},
		{engine.Progress{Pass: 3, Gate: true, Rows: 50, Bytes: 2e9, Size: 2e9, TotalRows: 50}, 200 * time.Second,
			"[##########] 100% writing · 50 rows · 2.0 GB · 10.0 MB/s · 0s left"},
		// Arrow stream on the first pass: neither bytes nor total rows.
		{engine.Progress{Pass: 1, Rows: 3000, Size: 5e6, TotalRows: -1}, 3 * time.Second,
			"pass 1 · 3,000 rows · 1,000 rows/s"},
		{engine.Progress{Pass: 2, Rows: 10, Bytes: 950, Size: 1900, TotalRows: 20}, 0,
			"[#####.....]  50% pass 2 · 10 rows · 950 B"},
		{engine.Progress{Pass: 1, Rows: 1, Bytes: 1, Size: 7200, TotalRows: -1}, time.Second,
			"[..........]   0% pass 1 · 1 rows · 1 B · 1 B/s · 1h59m left"},
	}
	for _, tt := range tests {
		if got := progressLine(tt.p, tt.elapsed); got != tt.want {
			t.Errorf("progressLine(%+v, %v)\n got %q\nwant %q", tt.p, tt.elapsed, got, tt.want)
		}
		if got := progressLine(tt.p, tt.elapsed); len([]rune(got)) > progressWidth || strings.ContainsAny(got, "\n\r") {
			t.Errorf("line %q is too long for a terminal or breaks", got)
		}
	}
}

func TestShortDuration(t *testing.T) {
	tests := []struct {
		d    time.Duration
		want string
	}{
		{0, "0s"}, {1499 * time.Millisecond, "1s"}, {59 * time.Second, "59s"}, {65 * time.Second, "1m05s"},
		{3599 * time.Second, "59m59s"}, {3720 * time.Second, "1h02m"}, {50 * time.Hour, "50h00m"},
	}
	for _, tt := range tests {
		if got := shortDuration(tt.d); got != tt.want {
			t.Errorf("shortDuration(%v) = %s, want %s", tt.d, got, tt.want)
		}
	}
}
