package curvefile

import (
	"errors"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// decimalText is the grammar of a number in a curve file, the reference
// for parseNum: an optional sign, digits with one optional decimal mark,
// at least one digit, an optional exponent.
var decimalText = regexp.MustCompile(`^[+-]?([0-9]+[.,]?[0-9]*|[.,][0-9]+)([eE][+-]?[0-9]+)?$`)

// refParseNum is parseNum as the reference reads it: the grammar above
// (a comma mark only where comma is true), then strconv.ParseFloat of the
// text with '.' as its decimal mark, finite values only.
func refParseNum(s string, comma bool) (float64, bool) {
	if !decimalText.MatchString(s) || !comma && strings.Contains(s, ",") {
		return 0, false
	}
	f, err := strconv.ParseFloat(strings.Replace(s, ",", ".", 1), 64)
	if err != nil && !errors.Is(err, strconv.ErrRange) || math.IsInf(f, 0) {
		return 0, false
	}
	return f, true
}

// FuzzParseNum compares parseNum with strconv.ParseFloat (refParseNum) on
// any text, with and without the decimal comma: the same numbers accepted,
// bit for bit the same values.
func FuzzParseNum(f *testing.F) {
	for _, s := range []string{"0", "-0", "+1.5", "1234.56", "0,25", "1e-1", ".5", "5.", "1e", "0x10", "NaN", "inf",
		"1.2345678901234567e3", "0.30000000000000004", "9007199254740993", "1e23", "1e-400", "1e400", "000000000000000000001.5",
		"4.9406564584124654e-324", "1,2.5", "1.5 ", " 1", "--1", "1_000"} {
		f.Add(s, false)
		f.Add(s, true)
	}
	f.Fuzz(func(t *testing.T, s string, comma bool) {
		got, ok := parseNum([]byte(s), comma)
		want, wok := refParseNum(s, comma)
		if ok != wok || ok && math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("parseNum(%q, %v) = %v %v (%x); strconv %v %v (%x)", s, comma, got, ok, math.Float64bits(got), want, wok, math.Float64bits(want))
		}
	})
}

// TestParseNumCases: numbers where the fast path ends and the slow path
// starts, checked against strconv.ParseFloat (bit for bit).
func TestParseNumCases(t *testing.T) {
	for _, s := range []string{
		"999999999999999", "9999999999999999", "0.000000000000001", "1e22", "1e23", "123456789012345e-22", "123456789012345e-23",
		"-0.0", "+0", "00000000000000000000000000000012.5", "12.50000000000000000000000000", "1,5", "-1,25e2", "2.2250738585072011e-308",
		"1.7976931348623157e308", "1.7976931348623159e308", "1e-400", "0e999999999999",
	} {
		for _, comma := range []bool{false, true} {
			got, ok := parseNum([]byte(s), comma)
			want, wok := refParseNum(s, comma)
			if ok != wok || ok && math.Float64bits(got) != math.Float64bits(want) {
				t.Errorf("parseNum(%q, %v) = %v %v; strconv %v %v", s, comma, got, ok, want, wok)
			}
		}
	}
}
