package tui

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// Run shows the dashboard on a terminal until the operator quits or ctx is
// done. The program owns out; nothing else may write to it meanwhile.
func Run(ctx context.Context, opt Options, in io.Reader, out io.Writer) error {
	p := tea.NewProgram(New(opt), tea.WithContext(ctx), tea.WithInput(in), tea.WithOutput(out),
		tea.WithAltScreen(), tea.WithFPS(30))
	_, err := p.Run()
	if errors.Is(err, tea.ErrProgramKilled) && ctx.Err() != nil {
		return nil // interrupted: a normal way out
	}
	return err
}

// Lines is the dashboard without a terminal: the same live pipeline (the
// same tracker, the same growing-curve analysis and judgement) printed as
// lines, for logs and smoke tests. It prints each channel's latest reading
// once a second of device time, every event, and each finished sample's
// verdict with its points, reasons and advice. It returns when the session
// ends, ctx is done, or maxSamples samples have finished (0: no limit).
// It keeps nothing: the session hands finished samples to the records.
func Lines(ctx context.Context, opt Options, w io.Writer, maxSamples int) error {
	fmt.Fprintln(w, "# "+SafetyLine)
	if opt.Feed == nil {
		return nil
	}
	updates := opt.Feed.Updates()
	lastSec := map[string]float64{}
	finished := 0
	for {
		var u sample.Update
		var ok bool
		select {
		case <-ctx.Done():
			return nil
		case u, ok = <-updates:
			if !ok {
				return nil
			}
		}
		for _, ev := range u.Events {
			if line := eventLine(ev); line != "" {
				fmt.Fprintln(w, escape.Line(line))
			}
		}
		for _, sn := range u.Channels {
			if !sn.HasLast {
				continue
			}
			sec := math.Floor(sn.Last.TimeS)
			if last, seen := lastSec[sn.Channel]; seen && sec <= last {
				continue
			}
			lastSec[sn.Channel] = sec
			c := newCup(sn)
			big, note := c.reading()
			fmt.Fprintf(w, "cup %s  t=%7.1f s  %s °C  %s %s\n", c.id(), sn.Last.TimeS, strings.TrimSpace(big), strings.ToLower(c.stateWord()), note)
		}
		for _, f := range u.Finished {
			fmt.Fprint(w, escape.Text(resultLines(f)))
			if f.Recovered {
				continue
			}
			finished++
			if maxSamples > 0 && finished >= maxSamples {
				return nil
			}
		}
	}
}

// eventLine is an event in words, "" for those not worth a line.
func eventLine(ev sample.Event) string {
	switch ev.Kind {
	case sample.EventDeviceInfo:
		return fmt.Sprintf("= device info cup %q: %s", ev.Channel, pairsText(ev.Info))
	case sample.EventStarted, sample.EventFrozen, sample.EventDone, sample.EventRecovered:
		return fmt.Sprintf("= %s: cup %s at %.1f s %s", ev.Kind, ev.Channel, ev.TimeS, ev.Path)
	case sample.EventConnected, sample.EventDisconnected, sample.EventWarning:
		return fmt.Sprintf("= %s %s", ev.Kind, ev.Text)
	}
	return ""
}

// pairsText is a device line's pairs as the line gives them, key=value in
// its order, values with spaces quoted (never a Go map's dump).
func pairsText(kv []curvefile.Meta) string {
	parts := make([]string, 0, len(kv))
	for _, x := range kv {
		v := x.Value
		if v == "" || strings.ContainsAny(v, " \t\"=") {
			v = strconv.Quote(v)
		}
		parts = append(parts, x.Key+"="+v)
	}
	return strings.Join(parts, " ")
}

// resultLines is a finished sample's verdict, points, reasons and advice.
func resultLines(f sample.Finished) string {
	var sb strings.Builder
	r := f.Record
	what := "RESULT"
	if f.Recovered {
		what = "RESULT (recovered)"
	}
	fmt.Fprintf(&sb, "%s cup %s sample %q alloy %q: %s\n", what, f.Channel, sampleName(f.Meta), r.Alloy, verdictWord(r.Verdict))
	for _, p := range pointsOf(resultFromRecord(r)) {
		fmt.Fprintf(&sb, "  %-16s %s\n", p.label, strings.TrimSpace(fmtPoint(p.p)))
	}
	fmt.Fprintf(&sb, "  %-16s %s\n", "recalescence", fmtOpt(r.RecalescenceC, "%.1f °C"))
	fmt.Fprintf(&sb, "  %-16s %s\n", "undercooling", fmtOpt(r.UndercoolingC, "%.1f °C"))
	for _, s := range recordReasons(&r) {
		fmt.Fprintf(&sb, "  • %s\n", s)
	}
	for _, s := range recordAdvice(&r) {
		fmt.Fprintf(&sb, "  → %s\n", s)
	}
	if f.Path != "" {
		fmt.Fprintf(&sb, "  curve file %s\n", f.Path)
	}
	return sb.String()
}
