package tui

import (
	"context"
	"fmt"

	"github.com/undercool-foundry/undercool/internal/store"
)

// StoreRecords keeps the history in the records database.
type StoreRecords struct {
	DB        *store.DB
	Simulated bool // the samples come from the simulator
	Furnace   string
}

// Add implements Records: one samples row with its first result. The
// curve file's hash is taken now, so later changes to it are found.
func (s StoreRecords) Add(ctx context.Context, e Entry) (Entry, error) {
	sum := ""
	if e.Path != "" {
		h, err := store.HashFile(e.Path)
		if err != nil {
			return e, fmt.Errorf("hashing the curve file: %w", err)
		}
		sum = h
	}
	id, err := s.DB.AddSample(ctx, store.Sample{
		Recorded: e.At, Sample: e.Meta.Sample, Ladle: ladleOf(e.Meta.Sample), Alloy: e.Meta.Alloy,
		Operator: e.Meta.Operator, Channel: e.Channel, Note: e.Meta.Note, Furnace: s.Furnace,
		CurvePath: e.Path, CurveSHA256: sum, Simulated: s.Simulated,
		Record: e.Record, LimitsVersion: e.Record.LimitsVersion,
	})
	if err != nil {
		return e, err
	}
	e.ID = id
	return e, nil
}

// List implements Records: the latest result of each sample, newest first.
func (s StoreRecords) List(ctx context.Context, alloy string, n int) ([]Entry, error) {
	rows, err := s.DB.History(ctx, store.Filter{Alloy: alloy, Limit: n, Full: true})
	if err != nil {
		return nil, err
	}
	out := make([]Entry, 0, len(rows))
	for _, r := range rows {
		sm := r.Sample
		out = append(out, Entry{ID: sm.ID, At: sm.Recorded, Channel: sm.Channel, Path: sm.CurvePath, Record: r.Result.Record,
			Meta: SampleMeta{Sample: sm.Sample, Alloy: sm.Alloy, Operator: sm.Operator, Note: sm.Note}})
	}
	return out, nil
}

// ladleOf takes the ladle id from a sample id like "L-2417 cup 1".
func ladleOf(sample string) string {
	for i, r := range sample {
		if r == ' ' {
			return sample[:i]
		}
	}
	return sample
}
