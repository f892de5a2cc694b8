package protocol

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
	"testing/iotest"
)

func TestParseLine(t *testing.T) {
	tests := []struct {
		in   string
		want Line
	}{
		{"c=1243.75", Line{Kind: LineReading, Channel: "1", HasTemp: true, TempC: 1243.75}},
		{"ch=1 ms=1000 c=25.00", Line{Kind: LineReading, Channel: "1", HasMS: true, MS: 1000, HasTemp: true, TempC: 25}},
		{"  ms=184230   c=-12.5\t", Line{Kind: LineReading, Channel: "1", HasMS: true, MS: 184230, HasTemp: true, TempC: -12.5}},
		{"ch=tellurium c=1147.2", Line{Kind: LineReading, Channel: "tellurium", HasTemp: true, TempC: 1147.2}},
		{"ch=2 ms=1100 mv=1.000 cj=25.0", Line{Kind: LineReading, Channel: "2", HasMS: true, MS: 1100, HasEMF: true, EMFmV: 1, HasCJ: true, ColdJctC: 25}},
		{"mv=41.276", Line{Kind: LineReading, Channel: "1", HasEMF: true, EMFmV: 41.276}},
		{"ch=1 ms=1200 f=open", Line{Kind: LineReading, Channel: "1", HasMS: true, MS: 1200, Fault: FaultOpen}},
		{"f=short", Line{Kind: LineReading, Channel: "1", Fault: FaultShort}},
		{"f=range ch=B-2", Line{Kind: LineReading, Channel: "B-2", Fault: FaultRange}},
		{"c=1e3", Line{Kind: LineReading, Channel: "1", HasTemp: true, TempC: 1000}},
		{"c=25 rssi=40", Line{Kind: LineReading, Channel: "1", HasTemp: true, TempC: 25}}, // later-version key: ignored
		{"1187.4", Line{Kind: LineReading, Channel: "1", HasTemp: true, TempC: 1187.4, Plain: true}},
		{"  +23 ", Line{Kind: LineReading, Channel: "1", HasTemp: true, TempC: 23, Plain: true}},
		{"-0.5", Line{Kind: LineReading, Channel: "1", HasTemp: true, TempC: -0.5, Plain: true}},
		{".5", Line{Kind: LineReading, Channel: "1", HasTemp: true, TempC: 0.5, Plain: true}},
		{"", Line{}},
		{"   ", Line{}},
		{"! dev=deck-amp fw=1.0 tc=K", Line{Kind: LineInfo, Info: []KV{{"dev", "deck-amp"}, {"fw", "1.0"}, {"tc", "K"}}}},
		{`! sample="L-2417 cup 1" alloy=grey-iron operator="Pell Brasswick"`, Line{Kind: LineInfo,
			Info: []KV{{"sample", "L-2417 cup 1"}, {"alloy", "grey-iron"}, {"operator", "Pell Brasswick"}}}},
		{`!note=""`, Line{Kind: LineInfo, Info: []KV{{"note", ""}}}},
		{"!", Line{Kind: LineInfo}},
	}
	for _, tt := range tests {
		got, err := ParseLine([]byte(tt.in))
		if err != nil {
			t.Errorf("ParseLine(%q): %v", tt.in, err)
			continue
		}
		if !reflect.DeepEqual(got, tt.want) {
			t.Errorf("ParseLine(%q)\n got %+v\nwant %+v", tt.in, got, tt.want)
		}
	}
}

func TestParseLineGarbage(t *testing.T) {
	tests := []struct{ in, why string }{
		{"c=12x", "not a decimal number"},
		{"c=", "empty value"},
		{"c=1 c=2", "given twice"},
		{"c=1 mv=2", "exactly one of"},
		{"ms=5 ch=1", "exactly one of"},
		{"ch=1 ch=2 c=3", "given twice"},
		{"c=1 ms=1 ms=2", "given twice"},
		{"c=inf", "not a decimal number"},
		{"c=NaN", "not a decimal number"},
		{"c=0x10", "not a decimal number"},
		{"c=1_000", "not a decimal number"},
		{"c=9999", "out of range"},
		{"mv=500", "out of range"},
		{"ms=-1 c=2", "not an unsigned integer"},
		{"ms=1.5 c=2", "not an unsigned integer"},
		{"ms=99999999999999999999999 c=2", "not an unsigned integer"},
		{"ch=abcdefghijklmnopq c=1", "longer than 16"},
		{"ch=a.b c=1", "only letters"},
		{"f=hot", "unknown fault"},
		{"C=25", "unknown key"},
		{"temp 25.0", "not key=value"},
		{"=5", "not key=value"},
		{"25.0 C", "not key=value"},
		{"1.2.3", "not key=value"},
		{"\xff\xfe\x80", "not key=value"},
		{"c=25.25*00", "does not match"},
		{"c=25.25*G1", "not two hex digits"},
		{`! sample="L-2417`, "unterminated"},
		{`! a="b"c`, "after the closing quote"},
		{`! a=b"c`, "stray quote"},
		{"! k", "not key=value"},
		{"! k.x=1", "must be letters"},
	}
	for _, tt := range tests {
		_, err := ParseLine([]byte(tt.in))
		if err == nil || !strings.Contains(err.Error(), tt.why) {
			t.Errorf("ParseLine(%q) error %v, want one saying %q", tt.in, err, tt.why)
		}
	}
}

// TestChecksum checks the DEVELOPERS.md example: the XOR of the bytes of
// "ch=1 ms=1100 c=25.25": 0x54, computed independently (a Python one-liner
// XOR over the bytes) and recomputed by the loop below.
func TestChecksum(t *testing.T) {
	line := []byte("ch=1 ms=1100 c=25.25")
	var x byte
	for _, c := range line { // the definition, independently of Checksum
		x ^= c
	}
	if got := Checksum(line); got != x || got != 0x54 {
		t.Fatalf("Checksum = %02X, want %02X (and 54, the value DEVELOPERS.md documents)", got, x)
	}
	withSum := AppendChecksum(line)
	if string(withSum) != "ch=1 ms=1100 c=25.25*54" {
		t.Fatalf("AppendChecksum = %q", withSum)
	}
	l, err := ParseLine(withSum)
	if err != nil || !l.Checksum || l.TempC != 25.25 {
		t.Fatalf("ParseLine(%q) = %+v, %v", withSum, l, err)
	}
	info := AppendChecksum([]byte(`! sample="L-2417 cup 1"`))
	if l, err := ParseLine(info); err != nil || l.InfoValue("sample") != "L-2417 cup 1" {
		t.Fatalf("info with checksum %q: %+v %v", info, l, err)
	}
	lower := bytes.ToLower(AppendChecksum([]byte("c=1.5")))
	if _, err := ParseLine(lower); err != nil {
		t.Fatalf("lower-case hex %q: %v", lower, err)
	}
}

// frameAll frames r with a fresh Framer through a bufio.Scanner.
func frameAll(r io.Reader) ([]string, *Framer, error) {
	var f Framer
	sc := bufio.NewScanner(r)
	sc.Split(f.Split)
	var out []string
	for sc.Scan() {
		out = append(out, sc.Text())
	}
	return out, &f, sc.Err()
}

func TestFramerReaders(t *testing.T) {
	long := strings.Repeat("x", MaxLineLen+1)
	stream := "c=1\nc=2\r\nc=3\rc=4\r\r\n\n" + long + "\nc=5\n" + strings.Repeat("y", 3*MaxLineLen) + "\r\nc=6\r\nc=7 cut by the unplug"
	want := []string{"c=1", "c=2", "c=3", "c=4", "", "", "c=5", "c=6"}
	readers := map[string]func(io.Reader) io.Reader{
		"plain":   func(r io.Reader) io.Reader { return r },
		"onebyte": iotest.OneByteReader,
		"half":    iotest.HalfReader,
		"dataerr": iotest.DataErrReader,
	}
	for name, wrap := range readers {
		t.Run(name, func(t *testing.T) {
			got, f, err := frameAll(wrap(strings.NewReader(stream)))
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(got, want) {
				t.Fatalf("lines %q, want %q", got, want)
			}
			// c=1 and the long line end in LF, c=2, the blank after c=4 and c=6 in CR LF,
			// c=3 and c=4 in CR, plus the blank LF line; "y"s end in CR LF.
			if f.LF.Load() != 4 || f.CRLF.Load() != 4 || f.CR.Load() != 2 {
				t.Errorf("LF %d CRLF %d CR %d, want 4 4 2", f.LF.Load(), f.CRLF.Load(), f.CR.Load())
			}
			if f.Overlong.Load() != 2 || f.Partial.Load() != 1 {
				t.Errorf("overlong %d partial %d, want 2 and 1", f.Overlong.Load(), f.Partial.Load())
			}
		})
	}
}

func TestFramerTimeoutReader(t *testing.T) {
	// TimeoutReader fails its second read: the lines of the first read are
	// kept, the cut line is counted as partial and the error comes through.
	got, f, err := frameAll(iotest.TimeoutReader(&fixedChunks{b: []byte("c=1\nc=2\nc=3\n"), n: 6}))
	if !errors.Is(err, iotest.ErrTimeout) {
		t.Fatalf("err %v, want ErrTimeout", err)
	}
	if !reflect.DeepEqual(got, []string{"c=1"}) || f.Partial.Load() != 1 {
		t.Fatalf("lines %q partial %d, want [c=1] and 1", got, f.Partial.Load())
	}
}

// TestFramerSplitsAnywhere: a random stream framed whole and framed in
// random pieces gives the same lines (fixed seed).
func TestFramerSplitsAnywhere(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 17))
	alphabet := []byte("c=0123456789.\r\n\r\n x")
	for trial := range 200 {
		b := make([]byte, rng.IntN(3000))
		for i := range b {
			b[i] = alphabet[rng.IntN(len(alphabet))]
		}
		whole, fw, _ := frameAll(bytes.NewReader(b))
		pieces, fp, _ := frameAll(&chunkReader{b: b, rng: rng})
		if !reflect.DeepEqual(whole, pieces) {
			t.Fatalf("trial %d: framing depends on read sizes", trial)
		}
		if fw.LF.Load() != fp.LF.Load() || fw.CRLF.Load() != fp.CRLF.Load() || fw.CR.Load() != fp.CR.Load() {
			t.Fatalf("trial %d: terminator counts depend on read sizes", trial)
		}
	}
}

// fixedChunks reads n bytes at a time.
type fixedChunks struct {
	b []byte
	n int
}

func (c *fixedChunks) Read(p []byte) (int, error) {
	if len(c.b) == 0 {
		return 0, io.EOF
	}
	k := copy(p[:min(len(p), c.n)], c.b)
	c.b = c.b[k:]
	return k, nil
}

type chunkReader struct {
	b   []byte
	rng *rand.Rand
}

func (c *chunkReader) Read(p []byte) (int, error) {
	if len(c.b) == 0 {
		return 0, io.EOF
	}
	n := min(len(p), len(c.b), 1+c.rng.IntN(7))
	copy(p, c.b[:n])
	c.b = c.b[n:]
	return n, nil
}

// TestAppendLineRoundTrip: AppendLine is ParseLine's inverse.
func TestAppendLineRoundTrip(t *testing.T) {
	lines := []Line{
		{Kind: LineReading, Channel: "1", HasMS: true, MS: 42, HasTemp: true, TempC: 1153.25},
		{Kind: LineReading, Channel: "tell", HasEMF: true, EMFmV: 47.123, HasCJ: true, ColdJctC: 24.5},
		{Kind: LineReading, Channel: "2", Fault: FaultOpen},
		{Kind: LineReading, Channel: "1", HasTemp: true, TempC: 0.1, Plain: true},
		{Kind: LineInfo, Info: []KV{{"operator", "Odile Flintcaster"}, {"ladle", "L-2417"}, {"note", ""}}},
	}
	for _, l := range lines {
		b := AppendLine(nil, l)
		got, err := ParseLine(b)
		if err != nil || !reflect.DeepEqual(got, l) {
			t.Errorf("%q: got %+v, %v; want %+v", b, got, err, l)
		}
	}
}

func FuzzParseLine(f *testing.F) {
	for _, s := range []string{"c=25.0", "ch=2 ms=1100 mv=1.000 cj=25.0", "ch=1 ms=1200 f=open", "1187.4",
		`! sample="L-2417 cup 1" alloy=grey-iron`, "c=25.25*54", "\xff\xfe", "c=1 c=2"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		l, err := ParseLine(b)
		if err != nil {
			return
		}
		switch l.Kind {
		case LineReading:
			n := 0
			for _, has := range []bool{l.HasTemp, l.HasEMF, l.Fault != FaultNone} {
				if has {
					n++
				}
			}
			if n != 1 {
				t.Fatalf("%q: a reading with %d of c, mv, f", b, n)
			}
			if _, err := parseChannel([]byte(l.Channel)); err != nil || l.Channel == "" {
				t.Fatalf("%q: bad channel %q", b, l.Channel)
			}
		case LineInfo:
		case LineBlank:
			if len(trimSpace(b)) != 0 {
				t.Fatalf("%q: blank but not empty", b)
			}
			return
		}
		// What parsed is written back and parses the same.
		again, err := ParseLine(AppendLine(nil, l))
		l.Checksum = false
		if err != nil || !reflect.DeepEqual(again, l) {
			t.Fatalf("%q: round trip gave %+v, %v; want %+v", b, again, err, l)
		}
	})
}

func BenchmarkParseLine(b *testing.B) {
	lines := [][]byte{
		[]byte("ch=1 ms=184230 c=1243.75"),
		[]byte("ch=2 ms=184230 mv=49.112 cj=27.4"),
		[]byte("1187.4"),
		[]byte("ch=1 ms=184235 c=1243.70*3F"),
	}
	for i, l := range lines {
		if i == 3 {
			lines[i] = AppendChecksum(l[:len(l)-3])
		}
	}
	n := 0
	for b.Loop() {
		if _, err := ParseLine(lines[n&3]); err != nil {
			b.Fatal(err)
		}
		n++
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "lines/s")
}

// BenchmarkFrameAndParse frames a block of protocol text and parses every
// line: the whole per-line cost of the reader.
func BenchmarkFrameAndParse(b *testing.B) {
	var buf bytes.Buffer
	for i := range 10000 {
		fmt.Fprintf(&buf, "ch=%d ms=%d c=%.2f\r\n", i%2+1, i*5, 1300-float64(i)*0.01)
	}
	data := buf.Bytes()
	lines := 0
	for b.Loop() {
		var f Framer
		sc := bufio.NewScanner(bytes.NewReader(data))
		sc.Split(f.Split)
		for sc.Scan() {
			if _, err := ParseLine(sc.Bytes()); err != nil {
				b.Fatal(err)
			}
			lines++
		}
	}
	b.ReportMetric(float64(lines)/b.Elapsed().Seconds(), "lines/s")
}

// FuzzFramer: whatever the bytes, framing them whole and one byte at a
// time gives the same lines, none longer than MaxLineLen or holding a line
// break.
func FuzzFramer(f *testing.F) {
	f.Add([]byte("c=1\r\nc=2\rc=3\n\n"), uint8(3))
	f.Add([]byte(strings.Repeat("x", MaxLineLen+3)+"\r\nc=4"), uint8(1))
	f.Fuzz(func(t *testing.T, b []byte, chunk uint8) {
		whole, fw, err := frameAll(bytes.NewReader(b))
		if err != nil {
			t.Fatal(err)
		}
		pieces, fp, err := frameAll(&fixedChunks{b: b, n: int(chunk%16) + 1})
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(whole, pieces) || fw.Partial.Load() != fp.Partial.Load() || fw.Overlong.Load() != fp.Overlong.Load() {
			t.Fatalf("framing depends on read sizes: %q vs %q", whole, pieces)
		}
		for _, l := range whole {
			if len(l) > MaxLineLen || strings.ContainsAny(l, "\r\n") {
				t.Fatalf("bad line %q", l)
			}
		}
	})
}
