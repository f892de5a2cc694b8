package tui

import (
	"context"
	"encoding/json"
	"sync"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
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
