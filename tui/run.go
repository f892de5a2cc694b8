package tui

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"

	tea "github.com/charmbracelet/bubbletea"
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
// same cups, the same growing-curve analysis and judgement) printed as
// lines, for logs and smoke tests. It prints each channel's reading once a
// second of device time, every event, and each finished sample's verdict
// with its points, reasons and advice. It returns when the source closes,
// ctx is done, or maxSamples samples have finished (0: no limit).
func Lines(ctx context.Context, opt Options, w io.Writer, maxSamples int) error {
	m := New(opt)
	fmt.Fprintln(w, "# "+SafetyLine)
	lastSec := map[string]float64{}
	finished := 0
	for {
		var b Batch
		var ok bool
		select {
		case <-ctx.Done():
			return nil
		case b, ok = <-m.feed:
			if !ok {
				return nil
			}
		}
		for _, ev := range b.Events {
			if line := eventLine(ev); line != "" {
				fmt.Fprintln(w, line)
			}
			if ev.Kind == EventRecovered && ev.Path != "" && m.opt.ReadCurve != nil {
				e, err := recoveredEntry(m.opt.ReadCurve, m.opt.Judge, ev)
				if err == nil {
					e.At = m.opt.Clock()
					_, err = m.opt.Records.Add(ctx, e)
				}
				if err != nil {
					fmt.Fprintf(w, "! could not keep the recovered sample %s: %v\n", ev.Path, err)
				}
			}
		}
		done := m.live.batch(b)
		for _, r := range b.Readings {
			sec := math.Floor(r.TimeS)
			if last, seen := lastSec[r.Channel]; seen && sec <= last {
				continue
			}
			lastSec[r.Channel] = sec
			c := m.live.cup(r.Channel)
			big, note := c.reading()
			fmt.Fprintf(w, "cup %s  t=%7.1f s  %s °C  %s %s\n", c.id, r.TimeS, strings.TrimSpace(big), strings.ToLower(c.stateWord()), note)
		}
		for _, e := range done {
			e.At = m.opt.Clock()
			if _, err := m.opt.Records.Add(ctx, e); err != nil {
				fmt.Fprintf(w, "! could not keep sample %q: %v\n", e.Meta.Sample, err)
			}
			fmt.Fprint(w, resultLines(e))
			finished++
			if maxSamples > 0 && finished >= maxSamples {
				return nil
			}
		}
	}
}

// eventLine is an event in words, "" for those not worth a line.
func eventLine(ev Event) string {
	switch ev.Kind {
	case EventDeviceInfo:
		return fmt.Sprintf("= device info cup %q: %v", ev.Channel, ev.Info)
	case EventSampleStarted, EventSampleFrozen, EventSampleDone, EventRecovered:
		return fmt.Sprintf("= %s: cup %s at %.1f s %s", ev.Kind, ev.Channel, ev.TimeS, ev.Path)
	case EventConnected, EventDisconnected, EventWarning:
		return fmt.Sprintf("= %s %s", ev.Kind, ev.Text)
	}
	return ""
}

// resultLines is a finished sample's verdict, points, reasons and advice.
func resultLines(e Entry) string {
	var sb strings.Builder
	r := e.Record
	fmt.Fprintf(&sb, "RESULT cup %s sample %q alloy %q: %s\n", e.Channel, e.Meta.Sample, e.Meta.Alloy, verdictWord(r.Verdict))
	res := resultFromRecord(r)
	c := cup{res: res}
	for _, p := range c.points() {
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
	if e.Path != "" {
		fmt.Fprintf(&sb, "  curve file %s\n", e.Path)
	}
	return sb.String()
}
