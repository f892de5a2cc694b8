package limits

import (
	"bytes"
	"errors"
	"reflect"
	"testing"
)

// FuzzParse checks the limits-file parser: Parse never panics; an error is
// a *limits.Error naming the file; a book that parses also passes
// Validate (the in-memory check the dashboard's editor uses) and survives
// Encode → Parse unchanged. The seed corpus is testdata/fuzz/FuzzParse
// (constructed files) plus the small files below; the shipped example is
// left out (12 KB inputs slow the mutator ten-fold; its round trip is
// TestSaveRoundTripBackupAndLog).
func FuzzParse(f *testing.F) {
	f.Add([]byte(goodFile))
	f.Add([]byte("version = \"t1\"\n[alloy.pure-zn]\nfamily = \"pure\"\n[alloy.pure-zn.reference]\nfixed_point_c = 419.527\n[alloy.pure-zn.metric.plateau_c]\npass_min = 417.3\npass_max = 421.7\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		b, err := Parse(data, "fuzz.toml")
		if err != nil {
			var le *Error
			if b != nil || !errors.As(err, &le) || le.File != "fuzz.toml" {
				t.Fatalf("error %v (%T) with book %v: want a *limits.Error naming fuzz.toml and no book", err, err, b)
			}
			return
		}
		if err := b.Validate(); err != nil {
			t.Fatalf("Parse accepted a book that Validate refuses: %v\n%s", err, data)
		}
		text := Encode(b)
		back, err := Parse(text, "fuzz.toml")
		if err != nil {
			t.Fatalf("the encoded book does not parse: %v\n--- input\n%s\n--- encoded\n%s", err, data, text)
		}
		if !reflect.DeepEqual(b, back) {
			t.Fatalf("Encode → Parse changed the book\n--- input\n%s\n--- encoded\n%s", data, text)
		}
		if again := Encode(back); !bytes.Equal(again, text) {
			t.Fatalf("encoding is not stable\n--- first\n%s\n--- second\n%s", text, again)
		}
	})
}
