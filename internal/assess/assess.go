// Package assess runs the whole decision pipeline for one sample: the
// characteristic points (arrest), then metallurgy and limits, and gives the
// stable JSON record that `undercool analyze --json`, the store and the
// dashboard share.
package assess

import (
	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/limits"
)

// Verdict values (stable, documented in README.md).
const (
	VerdictPass      = "pass"
	VerdictMarginal  = "marginal"
	VerdictFail      = "fail"
	VerdictInvalid   = "invalid"
	VerdictUnchecked = "unchecked"
)

// Record is the stable JSON result for one sample. Keys keep their meaning;
// new keys may be added. A point that was not found is null.
type Record struct {
	File    string  `json:"file"`
	Alloy   string  `json:"alloy"`
	Samples int     `json:"samples"`
	RateHz  float64 `json:"rate_hz"`

	PourPeakC      *float64 `json:"pour_peak_c"`
	PourPeakS      *float64 `json:"pour_peak_s"`
	LiquidusMinC   *float64 `json:"liquidus_min_c"`
	LiquidusMinS   *float64 `json:"liquidus_min_s"`
	LiquidusC      *float64 `json:"liquidus_c"`
	LiquidusS      *float64 `json:"liquidus_s"`
	EutecticMinC   *float64 `json:"eutectic_min_c"`
	EutecticMinS   *float64 `json:"eutectic_min_s"`
	EutecticMaxC   *float64 `json:"eutectic_max_c"`
	EutecticMaxS   *float64 `json:"eutectic_max_s"`
	RecalescenceC  *float64 `json:"recalescence_c"`
	SolidusC       *float64 `json:"solidus_c"`
	SolidusS       *float64 `json:"solidus_s"`
	PlateauS       *float64 `json:"plateau_s"`
	CoolingRateCps *float64 `json:"cooling_rate_c_per_s"`
	FreezingTimeS  *float64 `json:"freezing_time_s"`
	SkippedLines   int      `json:"skipped_lines"`
	Despiked       int      `json:"despiked"`

	Problems []string `json:"problems"`
	Verdict  string   `json:"verdict"`
}

// Input is one sample to assess.
type Input struct {
	File    string
	Alloy   string
	Family  arrest.Family
	Time    []float64 // s
	Temp    []float64 // °C
	Skipped int       // lines the reader skipped as noise

	// Limits is the shop's limits book; nil uses limits.Builtin() (the
	// shipped examples).
	Limits *limits.Book
}

// Assess analyses one sample and fills its record.
func Assess(in Input) Record {
	res := arrest.Analyze(in.Time, in.Temp, arrest.Options{Family: in.Family})
	return FromResult(in, res)
}

// FromResult builds the record from an already computed Result.
func FromResult(in Input, res arrest.Result) Record {
	r := Record{
		File: in.File, Alloy: in.Alloy, Samples: res.Samples, RateHz: res.RateHz,
		SkippedLines: in.Skipped, Despiked: res.Despiked,
		Problems: []string{},
	}
	r.PourPeakC, r.PourPeakS = point(res.PourPeak)
	r.LiquidusMinC, r.LiquidusMinS = point(res.LiquidusMin)
	r.LiquidusC, r.LiquidusS = point(res.Liquidus)
	r.EutecticMinC, r.EutecticMinS = point(res.EutecticMin)
	r.EutecticMaxC, r.EutecticMaxS = point(res.EutecticMax)
	r.SolidusC, r.SolidusS = point(res.Solidus)
	if res.RecalescenceOK {
		r.RecalescenceC = num(res.Recalescence)
	}
	if res.PlateauS > 0 {
		r.PlateauS = num(res.PlateauS)
	}
	if res.CoolingRateCps != 0 {
		r.CoolingRateCps = num(res.CoolingRateCps)
	}
	if res.FreezingTimeS > 0 {
		r.FreezingTimeS = num(res.FreezingTimeS)
	}
	for _, p := range res.Problems {
		r.Problems = append(r.Problems, p.Message)
	}
	r.Verdict = VerdictUnchecked
	if res.Invalid() {
		r.Verdict = VerdictInvalid
	}
	return r
}

func point(p arrest.Point) (c, s *float64) {
	if !p.OK {
		return nil, nil
	}
	return num(p.TempC), num(p.TimeS)
}

func num(v float64) *float64 { return &v }
