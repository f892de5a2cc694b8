package tui

import (
	"fmt"
	"io"
	"log"
	"strconv"
	"strings"
	"time"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// SafetyLine is always on screen; SafetyShort where the screen is narrow.
const (
	SafetyLine  = "Molten metal: PPE, dry tools and your shop's procedures first. Readings are advice."
	SafetyShort = "Molten metal: PPE, dry tools, shop procedures first. Readings are advice."
)

// Options configure the dashboard.
type Options struct {
	Feed    Feed         // the live session's updates (nil: nothing live)
	Pace    Pacer        // the replay's pace, when the source is one
	Title   string       // shown at the top right, e.g. "demo · simulated deck"
	Records Records      // history; nil shows none
	Limits  *limits.Book // the book shown and edited; nil uses the built-in examples
	// SaveLimits writes an edited book; nil makes the limits read-only.
	SaveLimits LimitsSaver
	ReadCurve  CurveReader // opens a stored sample's curve file
	// Advise gives the cup model's advice on each finished sample (nil:
	// none); ForecastAdvice is the commands'.
	Advise Adviser
	// Plant watches the link to the plant database (nil: none); the
	// status line shows its state and the log each change.
	Plant  PlantWatch
	Styles *Styles // nil builds them for lipgloss's default renderer
	Clock  func() time.Time
	Log    io.Writer // the log file; nil discards. Written by commands only.
}

type tab int

const (
	tabLive tab = iota
	tabHistory
	tabLimits
)

// Model is the dashboard's root model.
type Model struct {
	st    *Styles
	keys  KeyMap
	help  help.Model
	opt   Options
	feed  <-chan sample.Update
	pace  *pacer // spaces the deliveries of updates (feed.go)
	log   *log.Logger
	speed float64 // the replay's pace, as last set

	tab      tab
	live     livePane
	hist     historyPane
	lim      limitsPane
	form     formPane
	formOpen bool
	showHelp bool
	asking   bool   // "quit while recording?"
	stopping string // "stop the sample recording on this cup?": its channel
	verdict  *verdictView
	footH    int  // rows of the foot line: two for a message too long for one
	ended    bool // the session's channel closed
	status   feed.Status
	plant    PlantLink // the plant link's state, when Options.Plant is set
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
	m := Model{st: opt.Styles, keys: DefaultKeys(), help: help.New(), opt: opt, log: log.New(opt.Log, "", log.LstdFlags)}
	if opt.Feed != nil {
		m.feed, m.pace = opt.Feed.Updates(), &pacer{}
	}
	if opt.Pace != nil {
		m.speed = opt.Pace.Speed()
	}
	m.help.Styles.ShortKey = m.st.Mark
	m.help.Styles.ShortDesc = m.st.Muted
	m.help.Styles.FullKey = m.st.Mark
	m.help.Styles.FullDesc = m.st.Value
	m.help.Styles.ShortSeparator = m.st.Muted
	m.help.Styles.FullSeparator = m.st.Muted
	m.live = newLivePane(m.st, &m.keys, opt.Limits)
	m.hist = newHistoryPane(m.st, &m.keys, opt.Limits, opt.ReadCurve)
	m.lim = newLimitsPane(m.st, &m.keys, opt.Limits, opt.SaveLimits)
	m.form = newFormPane(m.st, &m.keys, opt.Limits.Names())
	return m.resize(80, 24)
}

// Init starts waiting for the first update and loads the history.
func (m Model) Init() tea.Cmd {
	return tea.Batch(waitUpdate(m.feed, m.pace), loadHistory(m.opt.Records), watchPlant(m.opt.Plant, nil))
}

// chrome is the rows taken by the title, status, help and safety lines.
const chrome = 4

func (m Model) resize(w, h int) Model {
	m.w, m.h = w, h
	m.footH = m.footRows()
	bh := m.bodyH()
	m.live = m.live.SetSize(w, bh)
	m.hist = m.hist.SetSize(w, bh)
	m.lim = m.lim.SetSize(w, bh)
	m.help.Width = w
	return m
}

// bodyH is the rows between the status line and the foot.
func (m Model) bodyH() int { return max(m.h-chrome-(m.footH-1), 1) }

// footRows is the rows the foot needs: a message longer than the screen
// is wide takes two (an error is never cut off at 80 columns).
func (m Model) footRows() int {
	if m.flash != "" && lipgloss.Width(escape.Line(m.flash)) > m.w && m.h >= 20 {
		return 2
	}
	return 1
}

// foot is the message, else the keys.
func (m Model) foot() string {
	if m.flash == "" {
		return clip(m.help.ShortHelpView(m.shortHelp()), m.w)
	}
	lines := wrapText(m.st.Muted, escape.Line(m.flash), m.w)
	if len(lines) > m.footH {
		lines = lines[:m.footH]
		lines[m.footH-1] = m.st.Muted.Render(cut(stripStyle(lines[m.footH-1]), m.w-1) + "…")
	}
	return strings.Join(lines, "\n")
}

// speedMsg says the replay's pace was set.
type speedMsg struct{ x float64 }

// Update handles one message.
func (m Model) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	tm, cmd := m.handle(msg)
	if nm := tm.(Model); nm.footRows() != nm.footH {
		return nm.resize(nm.w, nm.h), cmd
	}
	return tm, cmd
}

func (m Model) handle(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		return m.resize(msg.Width, msg.Height), nil
	case plantMsg:
		var logged tea.Cmd
		if msg.link != m.plant {
			logged = m.logf("%s", msg.link.Text) // commands write the log, never Update itself
		}
		m.plant = msg.link
		return m, tea.Batch(logged, watchPlant(m.opt.Plant, msg.next))
	case updateMsg:
		return m.update(msg.u)
	case feedClosedMsg:
		m.ended = true
		m.feed = nil
		m.live = m.live.ended()
		return m, m.logf("feed closed")
	case historyLoadedMsg:
		var cmd tea.Cmd
		if msg.err != nil {
			m.flash = msg.err.Error()
			cmd = m.logf("history: %v", msg.err)
		}
		m.hist, _ = m.hist.Update(msg)
		return m, cmd
	case curveLoadedMsg:
		m.hist, _ = m.hist.Update(msg)
		return m, nil
	case adviceMsg:
		m.live = m.live.setAdvice(msg)
		return m, nil
	case limitsSavedMsg:
		var cmd tea.Cmd
		if msg.err != nil {
			cmd = m.logf("limits not saved: %v", msg.err)
		} else {
			// the saved book is the one in use from now on: shown, edited
			// further, judged by
			cmd = tea.Batch(m.logf("limits saved to %s", msg.where), m.setLimits(msg.book))
			m.opt.Limits = msg.book
			m.hist = m.hist.setBook(msg.book)
			m.live = m.live.setBook(msg.book)
			m.form = m.form.setAlloys(msg.book.Names())
		}
		m.lim, _ = m.lim.Update(msg)
		return m, cmd
	case formDoneMsg:
		m.formOpen = false
		ch, meta := msg.channel, msg.meta
		return m, tea.Batch(m.logf("sample form for cup %s: %s", ch, metaText(meta)), m.toFeed(func(f Feed) { f.SetForm(ch, meta) }))
	case formClosedMsg:
		m.formOpen = false
		return m, nil
	case speedMsg:
		m.speed = msg.x
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

// update takes one update of the tracker: the cups' snapshots, the events
// (in the log, warnings in the foot line) and the finished samples (the
// history is read again once the store writer has them).
func (m Model) update(u sample.Update) (tea.Model, tea.Cmd) {
	m.status = u.Status
	var lines []string
	for _, ev := range u.Events {
		lines = append(lines, eventLog(ev))
		if ev.Kind == sample.EventWarning || ev.Kind == sample.EventRecovered || ev.Kind == sample.EventDisconnected {
			m.flash = ev.Text
		}
	}
	for _, f := range u.Finished {
		lines = append(lines, fmt.Sprintf("sample done: cup %s sample %q alloy %q verdict %s file %s",
			f.Channel, f.Meta.Get("sample"), f.Record.Alloy, f.Record.Verdict, f.Path))
	}
	m.live = m.live.apply(u.Channels, linkOf(u.Status, m.ended))
	cmds := []tea.Cmd{m.logLines(lines), waitUpdate(m.feed, m.pace)}
	for _, f := range u.Finished {
		if m.opt.Advise != nil && !f.Recovered {
			cmds = append(cmds, advise(m.opt.Advise, f, m.opt.Limits))
		}
	}
	if len(u.Finished) > 0 {
		cmds = append(cmds, loadHistory(m.opt.Records))
	}
	return m, tea.Batch(cmds...)
}

// eventLog is an event as a log line.
func eventLog(ev sample.Event) string {
	line := fmt.Sprintf("%s: cup %q at %.1f s: %s", ev.Kind, ev.Channel, ev.TimeS, ev.Text)
	if len(ev.Info) > 0 {
		line += " " + pairsText(ev.Info)
	}
	if ev.Path != "" {
		line += " " + ev.Path
	}
	return line
}

// logf is the command that writes a line to the log.
func (m Model) logf(format string, args ...any) tea.Cmd {
	l, line := m.log, fmt.Sprintf(format, args...)
	return func() tea.Msg {
		l.Print(escape.Text(line))
		return nil
	}
}

// logLines is the command that writes lines to the log, in order.
func (m Model) logLines(lines []string) tea.Cmd {
	if len(lines) == 0 {
		return nil
	}
	l := m.log
	return func() tea.Msg {
		for _, s := range lines {
			l.Print(escape.Text(s))
		}
		return nil
	}
}

// toFeed is the command that asks the session something.
func (m Model) toFeed(do func(Feed)) tea.Cmd {
	f := m.opt.Feed
	if f == nil {
		return nil
	}
	return func() tea.Msg {
		do(f)
		return nil
	}
}

// setLimits hands a saved book to the tracker.
func (m Model) setLimits(b *limits.Book) tea.Cmd {
	return m.toFeed(func(f Feed) { f.SetLimits(b) })
}

// metaText is sample metadata as text for the log.
func metaText(m sample.Meta) string {
	var parts []string
	for _, x := range m {
		parts = append(parts, x.Key+"="+strconv.Quote(x.Value))
	}
	return strings.Join(parts, " ")
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
	if m.stopping != "" {
		ch := m.stopping
		switch {
		case key.Matches(k, m.keys.Yes):
			m.stopping = ""
			m.flash = "stop asked for cup " + ch
			return m, tea.Batch(m.logf("stop asked by hand for cup %s", ch), m.toFeed(func(f Feed) { f.Stop(ch) }))
		case key.Matches(k, m.keys.No), key.Matches(k, m.keys.Quit):
			m.stopping = ""
		}
		return m, nil
	}
	if m.verdict != nil {
		switch {
		case key.Matches(k, m.keys.Up), key.Matches(k, m.keys.Down):
			v := *m.verdict // a copy: the model is a value
			d := 1
			if key.Matches(k, m.keys.Up) {
				d = -1
			}
			v.scroll(m.st, m.w, m.bodyH(), d)
			m.verdict = &v
		case key.Matches(k, m.keys.Verdict), key.Matches(k, m.keys.Back), key.Matches(k, m.keys.Quit):
			m.verdict = nil
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
	case key.Matches(k, m.keys.Verdict):
		if v := m.verdictOf(); v != nil {
			m.verdict = v
		} else {
			m.flash = "no verdict yet: a sample is judged when freezing is done"
		}
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
	pace := m.opt.Pace
	switch {
	case key.Matches(k, m.keys.Form):
		m.formOpen = true
		var cmd tea.Cmd
		m.form, cmd = m.form.open(c.id(), c.form(), c.state() != sample.Waiting)
		return m, cmd
	case key.Matches(k, m.keys.Start) && m.opt.Feed != nil:
		ch := c.id()
		m.flash = "start asked for cup " + ch
		return m, m.toFeed(func(f Feed) { f.Start(ch) })
	case key.Matches(k, m.keys.Stop) && m.opt.Feed != nil:
		if !c.busy() {
			m.flash = "cup " + c.id() + " is not recording: nothing to stop"
			return m, nil
		}
		m.stopping = c.id() // asked first: x is one press from other keys
		return m, nil
	case pace != nil && key.Matches(k, m.keys.Faster):
		return m, setSpeed(pace, nextSpeed(m.speed, 1))
	case pace != nil && key.Matches(k, m.keys.Slower):
		return m, setSpeed(pace, nextSpeed(m.speed, -1))
	case pace != nil && key.Matches(k, m.keys.End):
		return m, func() tea.Msg { pace.SkipToEnd(); return nil }
	case key.Matches(k, m.keys.Fraction):
		return m.toggleFraction(), nil
	}
	var cmd tea.Cmd
	m.live, cmd = m.live.Update(k)
	return m, cmd
}

// setSpeed is the command that sets the replay's pace.
func setSpeed(p Pacer, x float64) tea.Cmd {
	return func() tea.Msg {
		p.SetSpeed(x)
		return speedMsg{p.Speed()}
	}
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
	bh := m.bodyH()
	var body string
	switch m.tab {
	case tabHistory:
		body = m.hist.View()
	case tabLimits:
		body = m.lim.View()
	default:
		body = m.live.View()
	}
	body = box(body, m.w, bh)
	// The questions and the form sit at the foot of the pane, over it, so
	// that the cups' big slots (and the cup being asked about) stay in
	// sight; help and the whole verdict, which are read, in the middle.
	switch {
	case m.stopping != "":
		body = overlay(body, m.st.Dialog.Render(
			m.st.Error.Render("Stop recording cup "+m.stopping+" now?")+"\n\n"+
				m.st.Value.Render("The sample ends here and is judged as it stands;")+"\n"+
				m.st.Value.Render("its readings are kept.")+"\n\n"+
				m.st.Mark.Render("y")+m.st.Muted.Render(" stop it   ")+m.st.Mark.Render("n")+m.st.Muted.Render(" keep recording")), m.w, bh, true)
	case m.verdict != nil:
		body = overlay(body, m.verdict.view(m.st, m.w, bh), m.w, bh, false)
	case m.asking:
		body = overlay(body, m.st.Dialog.Render(
			m.st.Error.Render("A sample is recording.")+"\n\n"+m.st.Value.Render("Quit anyway? The raw log is kept.")+"\n\n"+
				m.st.Mark.Render("y")+m.st.Muted.Render(" quit   ")+m.st.Mark.Render("n")+m.st.Muted.Render(" keep recording")), m.w, bh, true)
	case m.formOpen:
		body = overlay(body, m.form.View(), m.w, bh, true)
	case m.showHelp:
		body = overlay(body, m.st.Dialog.Render(
			m.st.Title.Render("KEYS")+"\n\n"+m.help.FullHelpView(m.fullHelp())+"\n\n"+m.st.Muted.Render("? or esc to close")), m.w, bh, false)
	}
	return strings.Join([]string{m.titleBar(), m.statusLine(), body, m.foot(), safety}, "\n")
}

// overlay draws the block fg over bg (exactly w×h cells), centred across;
// at the foot of bg when low, else in its middle. A block larger than bg
// is cut.
func overlay(bg, fg string, w, h int, low bool) string {
	rows := strings.Split(bg, "\n")
	fl := strings.Split(fg, "\n")
	if len(fl) > h {
		fl = fl[:h]
	}
	fw := min(lipgloss.Width(fg), w)
	x0 := (w - fw) / 2
	y0 := (h - len(fl)) / 2
	if low {
		y0 = h - len(fl)
	}
	for i, l := range fl {
		r := y0 + i
		row := rows[r]
		rows[r] = ansi.Truncate(row, x0, "") + fit(l, fw) + ansi.TruncateLeft(row, x0+fw, "")
	}
	return strings.Join(rows, "\n")
}

// dialog reports whether a dialog covers the pane.
func (m Model) dialog() bool {
	return m.asking || m.stopping != "" || m.verdict != nil || m.formOpen || m.showHelp
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
			parts = append(parts, m.st.TabOn.Render("["+t.name+"]")) // brackets: the active tab shows without colour
		} else {
			parts = append(parts, m.st.Tab.Render(" "+t.name+" "))
		}
	}
	left := strings.Join(parts, "")
	right := m.st.Muted.Render(m.opt.Title)
	if m.opt.Pace != nil {
		right = m.st.Muted.Render(fmt.Sprintf("%s · %g×", m.opt.Title, m.speed))
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
	port := cut(escape.Line(s.Port), max(12, m.w/4))
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
	if p := m.plantPart(false); p != "" {
		parts = append(parts[:2], append([]string{p}, parts[2:]...)...) // beside the connection, before the counts
	}
	// The wording is chosen by the screen's width with room for four-digit
	// counts, never by the counts of the moment, so that line 2 does not
	// flip between its long and short form as they change.
	room := lipgloss.Width(port) + len("NOT CONNECTED") + // the widest wording of the connection
		len(" · 9999 readings/s · faults 9999 · garbage 9999 · reconnects 9999 · ")
	if m.opt.Plant != nil {
		room += len("PLANT DOWN 9999 queued · ")
	}
	if room > m.w {
		n := len(parts)
		parts[n-4] = m.st.Status.Render(fmt.Sprintf("%.0f/s", s.ReadingsPerS))
		parts[n-1] = m.st.Status.Render(fmt.Sprintf("reconn. %d", s.Reconnects))
		if m.opt.Plant != nil { // the plant's word needs the room: the shortest forms
			parts[2] = m.plantPart(true)
			parts[n-3] = strings.Replace(parts[n-3], "faults", "flt", 1)
			parts[n-2] = strings.Replace(parts[n-2], "garbage", "garb", 1)
			parts[n-1] = m.st.Status.Render(fmt.Sprintf("reconn %d", s.Reconnects))
		}
	}
	line := strings.Join(parts, m.st.Muted.Render(" · "))
	return clip(line, m.w)
}

func (m Model) global() []key.Binding {
	return []key.Binding{m.keys.Live, m.keys.History, m.keys.Limits, m.keys.Help, m.keys.Quit}
}

func (m Model) shortHelp() []key.Binding {
	var pane []key.Binding
	switch {
	case m.asking, m.stopping != "":
		return []key.Binding{m.keys.Yes, m.keys.No}
	case m.verdict != nil:
		return []key.Binding{m.keys.Up, m.keys.Down, m.keys.Back}
	case m.formOpen:
		pane = m.form.ShortHelp()
		return pane
	case m.tab == tabHistory:
		pane = m.hist.ShortHelp()
	case m.tab == tabLimits && m.lim.editing:
		return m.lim.ShortHelp() // every other key is typed into the field
	case m.tab == tabLimits:
		pane = m.lim.ShortHelp()
	default:
		pane = m.live.ShortHelp()
		if m.opt.Pace != nil {
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
		if m.opt.Pace != nil {
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
