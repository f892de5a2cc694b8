package tui

import (
	"context"
	"encoding/json"
	"fmt"
	"sync"
	"time"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"

	tea "github.com/charmbracelet/bubbletea"
)

// Entry is one finished sample in the history.
type Entry struct {
	ID      int64
	At      time.Time // when it was recorded
	Channel string
	Meta    SampleMeta
	Record  assess.Record
	Path    string    // the sample's curve file, "" when none was written
	Time    []float64 // the curve, s; may be nil for a stored sample (read from Path on opening)
	Temp    []float64 // °C
}

// Records is where the history lives: the store's database, or the
// session's memory when there is none.
type Records interface {
	// Add keeps a finished sample and returns it with its ID.
	Add(ctx context.Context, e Entry) (Entry, error)
	// List gives up to n samples, newest first; alloy "" means all.
	List(ctx context.Context, alloy string, n int) ([]Entry, error)
}

// Memory keeps the session's samples in memory. It is safe for concurrent
// use.
type Memory struct {
	mu      sync.Mutex
	entries []Entry
}

// Add implements Records.
func (m *Memory) Add(_ context.Context, e Entry) (Entry, error) {
	m.mu.Lock()
	defer m.mu.Unlock()
	e.ID = int64(len(m.entries) + 1)
	m.entries = append(m.entries, e)
	return e, nil
}

// List implements Records.
func (m *Memory) List(_ context.Context, alloy string, n int) ([]Entry, error) {
	m.mu.Lock()
	defer m.mu.Unlock()
	var out []Entry
	for i := len(m.entries) - 1; i >= 0 && len(out) < n; i-- {
		if alloy == "" || m.entries[i].Meta.Alloy == alloy {
			out = append(out, m.entries[i])
		}
	}
	return out, nil
}

// metricValues gives the numeric keys of a record's JSON form: every
// metric the trend can show, whatever keys assess adds later.
func metricValues(r assess.Record) map[string]float64 {
	b, err := json.Marshal(r)
	if err != nil {
		return nil
	}
	var raw map[string]any
	if json.Unmarshal(b, &raw) != nil {
		return nil
	}
	out := map[string]float64{}
	var walk func(prefix string, v any)
	walk = func(prefix string, v any) {
		switch v := v.(type) {
		case float64:
			out[prefix] = v
		case map[string]any:
			for k, x := range v {
				walk(k, x)
			}
		}
	}
	for k, v := range raw {
		walk(k, v)
	}
	delete(out, "samples")
	delete(out, "skipped_lines")
	delete(out, "despiked")
	return out
}

// recoveredCmd reads a sample that the acquirer recovered after a crash
// (its file marked "# interrupted: true"), analyses it as a finished curve
// and hands it to the model to keep, like any finished sample.
func recoveredCmd(read CurveReader, judge Judge, ev Event) tea.Cmd {
	return func() tea.Msg {
		e, err := recoveredEntry(read, judge, ev)
		if err != nil {
			return historyLoadedMsg{err: err}
		}
		return sampleDoneMsg{e: e, recovered: true}
	}
}

// recoveredEntry is the history entry of a recovered curve file.
func recoveredEntry(read CurveReader, judge Judge, ev Event) (Entry, error) {
	c, err := read(ev.Path)
	if err != nil {
		return Entry{}, fmt.Errorf("recovered sample %s: %w", ev.Path, err)
	}
	meta := SampleMeta{Sample: c.Get("sample"), Alloy: c.Get("alloy"), Operator: c.Get("operator"), Note: c.Get("note")}
	fam := familyOf(meta.Alloy)
	in := assess.Input{File: ev.Path, Alloy: meta.Alloy, Family: fam, Time: c.Time, Temp: c.Temp, Skipped: c.Skipped, Meta: c.Meta}
	rec := judge(in, arrest.Analyze(c.Time, c.Temp, arrest.Options{Family: fam}))
	return Entry{Channel: ev.Channel, Meta: meta, Record: rec, Path: ev.Path, Time: c.Time, Temp: c.Temp}, nil
}
