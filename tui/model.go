package tui

import (
	"context"
	"fmt"
	"io"
	"log"
	"strings"
	"time"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
)

// SafetyLine is always on screen; SafetyShort where the screen is narrow.
const (
	SafetyLine  = "Molten metal: PPE, dry tools and your shop's procedures first. Readings are advice."
	SafetyShort = "Molten metal: PPE, dry tools, shop procedures first. Readings are advice."
)

// Options configure the dashboard.
type Options struct {
	Source  Source       // where readings come from (required)
	Title   string       // shown at the top right, e.g. "demo · simulated deck"
	Records Records      // history; nil keeps the session's samples in memory
	Limits  *limits.Book // nil uses the built-in examples
	// SaveLimits writes an edited book; nil makes the limits read-only.
	SaveLimits LimitsSaver
	ReadCurve  CurveReader // opens a stored sample's curve file
	Prefill    SampleMeta  // the form's first values (e.g. the last sample)
	Styles     *Styles     // nil builds them for lipgloss's default renderer
	Analyzer   Analyzer    // nil: each cup's own arrest.Analyzer
	Judge      Judge       // nil uses assess.FromResult with Limits
	Clock      func() time.Time
	Log        io.Writer // the log file; nil discards
}

type tab int

const (
	tabLive tab = iota
	tabHistory
	tabLimits
)

// Model is the dashboard's root model.
type Model struct {
	st   *Styles
	keys KeyMap
	help help.Model
	opt  Options
	feed <-chan Batch
	pace *pacer // spaces the deliveries of batches (feed.go)
	log  *log.Logger

	tab      tab
	live     livePane
	hist     historyPane
	lim      limitsPane
	form     formPane
	formOpen bool
	showHelp bool
	asking   bool // "quit while recording?"
	ended    bool // the source's channel closed
	status   Status
	flash    string
	w, h     int
}

// New builds the dashboard.
func New(opt Options) Model {
	if opt.Limits == nil {
		opt.Limits = limits.Builtin()
	}
	if opt.Records == nil {
		opt.Records = &Memory{}
	}
	if opt.Styles == nil {
		opt.Styles = NewStyles(lipgloss.DefaultRenderer())
	}
	if opt.Clock == nil {
		opt.Clock = time.Now
	}
	if opt.Log == nil {
		opt.Log = io.Discard
	}
	if opt.Judge == nil {
		book := opt.Limits
		opt.Judge = func(in assess.Input, res arrest.Result) assess.Record {
			in.Limits = book
			return assess.FromResult(in, res)
		}
	}
	m := Model{st: opt.Styles, keys: DefaultKeys(), help: help.New(), opt: opt, log: log.New(opt.Log, "", log.LstdFlags)}
	if opt.Source != nil {
		m.feed, m.pace = opt.Source.Batches(), &pacer{}
	}
	m.help.Styles.ShortKey = m.st.Mark
	m.help.Styles.ShortDesc = m.st.Muted
	m.help.Styles.FullKey = m.st.Mark
	m.help.Styles.FullDesc = m.st.Value
	m.help.Styles.ShortSeparator = m.st.Muted
	m.help.Styles.FullSeparator = m.st.Muted
	m.live = newLivePane(m.st, &m.keys, opt.Analyzer, opt.Judge, opt.Prefill)
	m.hist = newHistoryPane(m.st, &m.keys, opt.Limits, opt.ReadCurve)
	m.lim = newLimitsPane(m.st, &m.keys, opt.Limits, opt.SaveLimits)
	m.form = newFormPane(m.st, &m.keys, opt.Limits.Names())
	return m.resize(80, 24)
}

// Init starts waiting for the first batch and loads the history.
func (m Model) Init() tea.Cmd {
	return tea.Batch(waitBatch(m.feed, m.pace), loadHistory(m.opt.Records))
}

// chrome is the rows taken by the title, status, help and safety lines.
const chrome = 4

func (m Model) resize(w, h int) Model {
	m.w, m.h = w, h
	bh := max(h-chrome, 1)
	m.live = m.live.SetSize(w, bh)
	m.hist = m.hist.SetSize(w, bh)
	m.lim = m.lim.SetSize(w, bh)
	m.help.Width = w
	return m
}

// Update handles one message.
func (m Model) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		return m.resize(msg.Width, msg.Height), nil
	case batchMsg:
		m.status = msg.b.Status
		var recovered []tea.Cmd
		for _, ev := range msg.b.Events {
			m.logEvent(ev)
			if ev.Kind == EventWarning || ev.Kind == EventRecovered {
				m.flash = ev.Text
			}
			if ev.Kind == EventRecovered && ev.Path != "" && m.opt.ReadCurve != nil {
				recovered = append(recovered, recoveredCmd(m.opt.ReadCurve, m.opt.Judge, ev))
			}
		}
		var cmd tea.Cmd
		m.live, cmd = m.live.Update(msg)
		return m, tea.Batch(append(recovered, cmd, waitBatch(m.feed, m.pace))...)
	case feedClosedMsg:
		m.ended = true
		m.feed = nil
		m.log.Printf("feed closed")
		return m, nil
	case sampleDoneMsg:
		e := msg.e
		e.At = m.opt.Clock()
		m.log.Printf("sample done: cup %s sample %q alloy %q verdict %s file %s", e.Channel, e.Meta.Sample, e.Meta.Alloy, e.Record.Verdict, e.Path)
		if !msg.recovered {
			m.live.prefill = e.Meta
		}
		rs := m.opt.Records
		return m, func() tea.Msg {
			if _, err := rs.Add(context.Background(), e); err != nil {
				return historyLoadedMsg{err: fmt.Errorf("keeping sample %q: %w", e.Meta.Sample, err)}
			}
			es, err := rs.List(context.Background(), "", 500)
			return historyLoadedMsg{es, err}
		}
	case historyLoadedMsg:
		if msg.err != nil {
			m.log.Printf("history: %v", msg.err)
			m.flash = msg.err.Error()
		}
		m.hist, _ = m.hist.Update(msg)
		return m, nil
	case curveLoadedMsg:
		m.hist, _ = m.hist.Update(msg)
		return m, nil
	case limitsSavedMsg:
		if msg.err != nil {
			m.log.Printf("limits not saved: %v", msg.err)
		} else {
			m.log.Printf("limits saved to %s", msg.where)
		}
		m.lim, _ = m.lim.Update(msg)
		return m, nil
	case formDoneMsg:
		m.formOpen = false
		m.live.cup(msg.channel).setForm(msg.meta)
		m.live.prefill = msg.meta
		m.log.Printf("sample form for cup %s: %+v", msg.channel, msg.meta)
		src, ch, meta := m.opt.Source, msg.channel, metaLines(msg.meta)
		return m, func() tea.Msg {
			if src != nil {
				src.SetMeta(ch, meta)
			}
			return nil
		}
	case formClosedMsg:
		m.formOpen = false
		return m, nil
	case tea.KeyMsg:
		return m.key(msg)
	}
	if m.formOpen {
		var cmd tea.Cmd
		m.form, cmd = m.form.Update(msg)
		return m, cmd
	}
	if m.tab == tabLimits {
		var cmd tea.Cmd
		m.lim, cmd = m.lim.Update(msg)
		return m, cmd
	}
	return m, nil
}

func (m Model) logEvent(ev Event) {
	m.log.Printf("%s: cup %q at %.1f s: %s %v %s", ev.Kind, ev.Channel, ev.TimeS, ev.Text, ev.Info, ev.Path)
}

// metaLines is the form as curve-file metadata.
func metaLines(s SampleMeta) []curvefile.Meta {
	var out []curvefile.Meta
	for _, kv := range [][2]string{{"sample", s.Sample}, {"alloy", s.Alloy}, {"operator", s.Operator}, {"note", s.Note}} {
		if kv[1] != "" {
			out = append(out, curvefile.Meta{Key: kv[0], Value: kv[1]})
		}
	}
	return out
}

func (m Model) key(k tea.KeyMsg) (tea.Model, tea.Cmd) {
	m.flash = ""
	if m.asking {
		switch {
		case key.Matches(k, m.keys.Yes), k.String() == "ctrl+c":
			return m, tea.Quit
		case key.Matches(k, m.keys.No), key.Matches(k, m.keys.Quit):
			m.asking = false
		}
		return m, nil
	}
	if m.formOpen {
		var cmd tea.Cmd
		m.form, cmd = m.form.Update(k)
		return m, cmd
	}
	if m.tab == tabLimits && m.lim.editing {
		var cmd tea.Cmd
		m.lim, cmd = m.lim.Update(k)
		return m, cmd
	}
	if m.showHelp {
		if key.Matches(k, m.keys.Help) || key.Matches(k, m.keys.Back) || key.Matches(k, m.keys.Quit) {
			m.showHelp = false
		}
		return m, nil
	}
	switch {
	case key.Matches(k, m.keys.Quit):
		if m.live.recording() {
			m.asking = true
			return m, nil
		}
		return m, tea.Quit
	case key.Matches(k, m.keys.Help):
		m.showHelp = true
		return m, nil
	case key.Matches(k, m.keys.Live):
		m.tab = tabLive
		return m, nil
	case key.Matches(k, m.keys.History):
		m.tab = tabHistory
		return m, nil
	case key.Matches(k, m.keys.Limits):
		m.tab = tabLimits
		return m, nil
	}
	var cmd tea.Cmd
	switch m.tab {
	case tabHistory:
		m.hist, cmd = m.hist.Update(k)
	case tabLimits:
		m.lim, cmd = m.lim.Update(k)
	default:
		return m.liveKey(k)
	}
	return m, cmd
}

var speeds = []float64{1, 2, 4, 5, 10, 20, 50}

func (m Model) liveKey(k tea.KeyMsg) (tea.Model, tea.Cmd) {
	c := m.live.activeCup()
	src := m.opt.Source
	sp, canPace := src.(speeder)
	switch {
	case key.Matches(k, m.keys.Form):
		m.formOpen = true
		var cmd tea.Cmd
		m.form, cmd = m.form.open(c.id, c.form(), c.busy())
		return m, cmd
	case key.Matches(k, m.keys.Start) && src != nil:
		ch := c.id
		m.flash = "start asked for cup " + ch
		return m, func() tea.Msg { src.Start(ch); return nil }
	case key.Matches(k, m.keys.Stop) && src != nil:
		ch := c.id
		m.flash = "stop asked for cup " + ch
		return m, func() tea.Msg { src.Stop(ch); return nil }
	case canPace && key.Matches(k, m.keys.Faster):
		sp.SetSpeed(nextSpeed(sp.Speed(), 1))
		return m, nil
	case canPace && key.Matches(k, m.keys.Slower):
		sp.SetSpeed(nextSpeed(sp.Speed(), -1))
		return m, nil
	case canPace && key.Matches(k, m.keys.End):
		sp.SkipToEnd()
		return m, nil
	}
	var cmd tea.Cmd
	m.live, cmd = m.live.Update(k)
	return m, cmd
}

func nextSpeed(cur float64, dir int) float64 {
	if dir > 0 {
		for _, s := range speeds {
			if s > cur {
				return s
			}
		}
		return speeds[len(speeds)-1]
	}
	for i := len(speeds) - 1; i >= 0; i-- {
		if speeds[i] < cur {
			return speeds[i]
		}
	}
	return speeds[0]
}

// View draws the whole screen.
func (m Model) View() string {
	line := SafetyLine
	if len(line)+2 > m.w {
		line = SafetyShort
	}
	safety := m.st.Safety.Render(clip(padRight(" "+line, m.w), m.w))
	if m.w < 40 || m.h < 10 {
		return lipgloss.JoinVertical(lipgloss.Left, m.st.Error.Render("Make the window larger (80×24 or more)."), safety)
	}
	bh := m.h - chrome
	var body string
	switch {
	case m.asking:
		body = lipgloss.Place(m.w, bh, lipgloss.Center, lipgloss.Center, m.st.Dialog.Render(
			m.st.Error.Render("A sample is recording.")+"\n\n"+m.st.Value.Render("Quit anyway? The raw log is kept.")+"\n\n"+
				m.st.Mark.Render("y")+m.st.Muted.Render(" quit   ")+m.st.Mark.Render("n")+m.st.Muted.Render(" keep recording")))
	case m.formOpen:
		body = lipgloss.Place(m.w, bh, lipgloss.Center, lipgloss.Center, m.form.View())
	case m.showHelp:
		body = lipgloss.Place(m.w, bh, lipgloss.Center, lipgloss.Center, m.st.Dialog.Render(
			m.st.Title.Render("KEYS")+"\n\n"+m.help.FullHelpView(m.fullHelp())+"\n\n"+m.st.Muted.Render("? or esc to close")))
	default:
		switch m.tab {
		case tabHistory:
			body = m.hist.View()
		case tabLimits:
			body = m.lim.View()
		default:
			body = m.live.View()
		}
	}
	if m.tab != tabLive || m.asking || m.formOpen || m.showHelp {
		body = box(body, m.w, bh) // the live pane is drawn to size already
	}
	foot := m.st.Muted.Render(clip(m.flash, m.w))
	if m.flash == "" {
		foot = m.help.ShortHelpView(m.shortHelp())
	}
	return strings.Join([]string{m.titleBar(), m.statusLine(), body, clip(foot, m.w), safety}, "\n")
}

func padRight(s string, w int) string {
	if n := lipgloss.Width(s); n < w {
		return s + strings.Repeat(" ", w-n)
	}
	return s
}

func (m Model) titleBar() string {
	tabs := []struct {
		t    tab
		name string
	}{{tabLive, "1 LIVE"}, {tabHistory, "2 HISTORY"}, {tabLimits, "3 LIMITS"}}
	parts := []string{m.st.Title.Render("UNDERCOOL ")}
	for _, t := range tabs {
		if t.t == m.tab {
			parts = append(parts, m.st.TabOn.Render(t.name))
		} else {
			parts = append(parts, m.st.Tab.Render(t.name))
		}
	}
	left := strings.Join(parts, "")
	right := m.st.Muted.Render(m.opt.Title)
	if sp, ok := m.opt.Source.(speeder); ok {
		right = m.st.Muted.Render(fmt.Sprintf("%s · %g×", m.opt.Title, sp.Speed()))
	}
	if room := m.w - lipgloss.Width(left) - 1; lipgloss.Width(right) > room {
		right = m.st.Muted.Render("…" + tail(stripStyle(right), room-1))
	}
	gap := m.w - lipgloss.Width(left) - lipgloss.Width(right)
	if gap < 1 {
		return clip(left, m.w)
	}
	return left + strings.Repeat(" ", gap) + right
}

func (m Model) statusLine() string {
	s := m.status
	port := cut(s.Port, max(12, m.w/4))
	if port == "" {
		port = "no port"
	}
	var conn string
	switch {
	case m.ended:
		conn = m.st.StatusBad.Render("FEED ENDED")
	case s.Reconnecting:
		conn = m.st.StatusBad.Render("RECONNECTING")
	case s.Connected:
		conn = m.st.Value.Render("connected")
	default:
		conn = m.st.StatusBad.Render("NOT CONNECTED")
	}
	faults := m.st.Status.Render(fmt.Sprintf("faults %d", s.Faults))
	if s.Faults > 0 {
		faults = m.st.StatusBad.Render(fmt.Sprintf("faults %d", s.Faults))
	}
	parts := []string{
		m.st.Status.Render(port), conn,
		m.st.Status.Render(fmt.Sprintf("%.0f readings/s", s.ReadingsPerS)),
		faults,
		m.st.Status.Render(fmt.Sprintf("garbage %d", s.Garbage)),
		m.st.Status.Render(fmt.Sprintf("reconnects %d", s.Reconnects)),
	}
	line := strings.Join(parts, m.st.Muted.Render(" · "))
	if lipgloss.Width(line) > m.w {
		parts[2] = m.st.Status.Render(fmt.Sprintf("%.0f/s", s.ReadingsPerS))
		parts[5] = m.st.Status.Render(fmt.Sprintf("reconn. %d", s.Reconnects))
		line = strings.Join(parts, m.st.Muted.Render(" · "))
	}
	return clip(line, m.w)
}

func (m Model) global() []key.Binding {
	return []key.Binding{m.keys.Live, m.keys.History, m.keys.Limits, m.keys.Help, m.keys.Quit}
}

func (m Model) shortHelp() []key.Binding {
	var pane []key.Binding
	switch {
	case m.asking:
		return []key.Binding{m.keys.Yes, m.keys.No}
	case m.formOpen:
		pane = m.form.ShortHelp()
		return pane
	case m.tab == tabHistory:
		pane = m.hist.ShortHelp()
	case m.tab == tabLimits:
		pane = m.lim.ShortHelp()
	default:
		pane = m.live.ShortHelp()
		if _, ok := m.opt.Source.(speeder); ok {
			pane = append(pane, m.keys.Faster, m.keys.Slower, m.keys.End)
		}
	}
	return append(pane, m.keys.Help, m.keys.Quit)
}

func (m Model) fullHelp() [][]key.Binding {
	var groups [][]key.Binding
	switch m.tab {
	case tabHistory:
		groups = m.hist.FullHelp()
	case tabLimits:
		groups = m.lim.FullHelp()
	default:
		groups = m.live.FullHelp()
		if _, ok := m.opt.Source.(speeder); ok {
			groups = append(groups, []key.Binding{m.keys.Faster, m.keys.Slower, m.keys.End})
		}
	}
	return append(groups, m.global())
}

// tail is the last n cells of plain text s.
func tail(s string, n int) string {
	r := []rune(s)
	if n <= 0 {
		return ""
	}
	if len(r) > n {
		return string(r[len(r)-n:])
	}
	return s
}

// stripStyle removes escape sequences.
func stripStyle(s string) string { return ansi.Strip(s) }
