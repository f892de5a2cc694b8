package acquire

import (
	"bytes"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/protocol"
)

// FuzzInfoLinesFile: whatever device-information lines a device sends
// (the input, one line each), the metadata the acquirer makes of them for
// a sample's file (the "device" line, the sample keys as the tracker would
// pass them on) is written into a curve file that reads back, with no
// control character in any value, and with at most MaxDeviceKeys device
// keys. Before the fix one invalid byte (`! fw=1.3\xff`) or 50,000 keys
// made a file that analyze refused.
func FuzzInfoLinesFile(f *testing.F) {
	f.Add([]byte("! fw=1.3 dev=stand-2 tc=K\n! sample=\"L-2405 cup 1\" alloy=grey-iron"))
	f.Add([]byte("! fw=1.3\xff\n! note=\"a\u202eb\"\n! x=\x1b]0;t\x07"))
	var many strings.Builder
	for i := range 100 {
		many.WriteString("! k" + strings.Repeat("x", i%7) + string(rune('a'+i%26)) + "=" + strings.Repeat("v", 40) + "\n")
	}
	f.Add([]byte(many.String()))
	f.Fuzz(func(t *testing.T, in []byte) {
		a := New(nil, Config{Dir: t.TempDir()})
		if err := a.setup(); err != nil {
			t.Fatal(err)
		}
		c := a.channel("1")
		for _, line := range bytes.Split(in, []byte("\n")) {
			l, err := protocol.ParseLine(line)
			if err != nil || l.Kind != protocol.LineInfo {
				continue
			}
			a.info(&l)
			for _, kv := range l.Info {
				if protocol.IsSampleKey(kv.Key) {
					c.next = mergeMeta(c.next, []curvefile.Meta{{Key: kv.Key, Value: kv.Value}})
				}
			}
		}
		if len(a.devInfo) > MaxDeviceKeys {
			t.Fatalf("%d device keys kept", len(a.devInfo))
		}
		meta := a.sampleMeta(c, "pour detected")
		var buf bytes.Buffer
		w, err := curvefile.NewWriter(&buf, meta, "flags")
		if err != nil {
			t.Fatalf("the acquirer made metadata the writer refuses: %v", err)
		}
		if err := w.Write(0, 25, ""); err != nil {
			t.Fatal(err)
		}
		back, err := curvefile.Read(bytes.NewReader(buf.Bytes()), "cup.csv")
		if err != nil {
			t.Fatalf("the device made its own file unreadable: %v\n%q", err, buf.Bytes())
		}
		for _, m := range back.Meta {
			if !escape.Safe(strings.ReplaceAll(m.Value, "\t", " ")) {
				t.Fatalf("metadata %s holds raw control text: %q", m.Key, m.Value)
			}
		}
	})
}
