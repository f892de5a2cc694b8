package tui

import (
	"context"
	"sync"
	"time"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// Entry is one finished sample in the history.
type Entry struct {
	ID      int64
	At      time.Time // when the sample was taken
	Channel string
	Meta    sample.Meta
	Record  assess.Record
	Path    string    // the sample's curve file, "" when none was written
	Time    []float64 // the curve, s; may be nil for a stored sample (read from Path on opening)
	Temp    []float64 // °C
	// Simulated says the sample came from the simulator, not a real cup.
	Simulated bool
}

// Records is where the history comes from: the records database, through
// the store writer (whose List waits for the samples handed to it), or the
// session's memory when there is none.
type Records interface {
	// List gives up to n samples, newest first; alloy "" means all.
	List(ctx context.Context, alloy string, n int) ([]Entry, error)
}

// Memory keeps a session's finished samples in memory, for a replay or a
// test without a records database. It is safe for concurrent use.
type Memory struct {
	mu      sync.Mutex
	entries []Entry
	Clock   func() time.Time // when a sample counts as taken; nil: time.Now
}

// Add keeps a finished sample (the session's Options.Finished).
func (m *Memory) Add(f sample.Finished) {
	m.mu.Lock()
	defer m.mu.Unlock()
	at := time.Now
	if m.Clock != nil {
		at = m.Clock
	}
	m.entries = append(m.entries, Entry{ID: int64(len(m.entries) + 1), At: at(), Channel: f.Channel, Meta: f.Meta,
		Record: f.Record, Path: f.Path, Time: f.T, Temp: f.V, Simulated: f.Simulated})
}

// List implements Records.
func (m *Memory) List(_ context.Context, alloy string, n int) ([]Entry, error) {
	m.mu.Lock()
	defer m.mu.Unlock()
	var out []Entry
	for i := len(m.entries) - 1; i >= 0 && len(out) < n; i-- {
		if alloy == "" || m.entries[i].Meta.Get("alloy") == alloy {
			out = append(out, m.entries[i])
		}
	}
	return out, nil
}

// historyLoadedMsg carries a history query's answer.
type historyLoadedMsg struct {
	entries []Entry
	err     error
}

// loadHistory is the command that reads the history.
func loadHistory(rs Records) tea.Cmd {
	return func() tea.Msg {
		es, err := rs.List(context.Background(), "", 500)
		return historyLoadedMsg{es, err}
	}
}
