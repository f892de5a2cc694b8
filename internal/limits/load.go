package limits

import (
	"bytes"
	_ "embed"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"
)

//go:embed shipped/limits.toml
var shipped []byte

// Example returns the text of the shipped example limits file (for
// `undercool limits init`).
func Example() []byte { return bytes.Clone(shipped) }

// Builtin returns a fresh copy of the shipped example book. Its numbers are
// examples the shop's metallurgist must set.
func Builtin() *Book {
	b, err := Parse(shipped, "built-in")
	if err != nil {
		panic("limits: shipped example is invalid: " + err.Error())
	}
	return b
}

// Load reads and validates a limits file. Errors name the file, the line
// and the key. A file that is not a regular file, is larger than
// MaxFileBytes or nests deeper than MaxKeyDepth / MaxValueDepth is refused
// before it is decoded.
func Load(path string) (*Book, error) {
	data, err := readBounded(path)
	if err != nil {
		return nil, err
	}
	b, err := Parse(data, path)
	if err != nil {
		return nil, err
	}
	if b.CalibrationFile != "" {
		if b.Calibration != nil {
			return nil, &Error{File: path, Line: lineOf(data, "calibration_file"), Key: "calibration_file",
				Msg: "both an inline [calibration] table and calibration_file are set; keep one"}
		}
		cpath := b.CalibrationFile
		if !filepath.IsAbs(cpath) {
			cpath = filepath.Join(filepath.Dir(path), cpath)
		}
		cal, err := LoadCalibration(cpath)
		if err != nil {
			return nil, err
		}
		b.Calibration = cal
		if err := b.validate(data, path); err != nil {
			return nil, err
		}
	}
	return b, nil
}

// Error is a problem in a limits file, with its place.
type Error struct {
	File string
	Line int // 0 when unknown
	Key  string
	Msg  string
	Err  error
}

// Error writes FILE:LINE: KEY: message. Control and bidirectional-control
// characters of the file, key or message are written as visible escapes
// (\u001B), so that a bad limits file cannot reach the terminal raw
// through its own error.
func (e *Error) Error() string {
	s := e.File
	if e.Line > 0 {
		s += fmt.Sprintf(":%d", e.Line)
	}
	if e.Key != "" {
		s += ": " + e.Key
	}
	s += ": " + e.Msg
	if e.Err != nil {
		s += ": " + e.Err.Error()
	}
	return visible(s)
}

func (e *Error) Unwrap() error { return e.Err }

// Parse decodes and validates the text of a limits file; name is used in
// error messages. A calibration_file it names is not read (Load reads it).
func Parse(data []byte, name string) (*Book, error) {
	if err := guard(data, name); err != nil {
		return nil, err
	}
	var b Book
	md, err := toml.NewDecoder(bytes.NewReader(data)).Decode(&b)
	if err != nil {
		return nil, decodeError(name, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := strings.Join(und[0], ".")
		return nil, &Error{File: name, Line: lineOf(data, k), Key: k, Msg: "unknown key"}
	}
	b.Source = name
	for n, a := range b.Alloys {
		if a == nil {
			a = &Alloy{}
			b.Alloys[n] = a
		}
		a.Name = n
		// an empty table ([chemistry], [metric], a reference's slopes or
		// depressors) says what leaving it out says
		if len(a.Chemistry) == 0 {
			a.Chemistry = nil
		}
		if len(a.Metrics) == 0 {
			a.Metrics = nil
		}
		if len(a.Reference.LiquidusSlopes) == 0 {
			a.Reference.LiquidusSlopes = nil
		}
		if len(a.Reference.EutecticDepressors) == 0 {
			a.Reference.EutecticDepressors = nil
		}
		for _, l := range a.Metrics {
			if l != nil && len(l.Spoils) == 0 {
				l.Spoils = nil // "spoils = []" says what leaving it out says
			}
		}
	}
	if len(b.InoculantTables) == 0 {
		b.InoculantTables = nil // an empty [inoculant] table says what leaving it out says
	}
	b.nameInoculants()
	if err := b.validate(data, name); err != nil {
		return nil, err
	}
	return &b, nil
}

// LoadCalibration reads a file holding a [calibration] table.
func LoadCalibration(path string) (*Calibration, error) {
	data, err := readBounded(path)
	if err != nil {
		return nil, err
	}
	if err := guard(data, path); err != nil {
		return nil, err
	}
	var f struct {
		Calibration *Calibration `toml:"calibration"`
	}
	md, err := toml.NewDecoder(bytes.NewReader(data)).Decode(&f)
	if err != nil {
		return nil, decodeError(path, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := strings.Join(und[0], ".")
		return nil, &Error{File: path, Line: lineOf(data, k), Key: k, Msg: "unknown key"}
	}
	if f.Calibration == nil {
		return nil, &Error{File: path, Msg: "no [calibration] table"}
	}
	return f.Calibration, nil
}

// readBounded reads a limits or calibration file: a regular file of at
// most MaxFileBytes (a FIFO or device would block or never end; an
// oversized file is refused before it is read).
func readBounded(path string) ([]byte, error) {
	st, err := os.Stat(path) // before opening: opening a FIFO blocks
	if err != nil {
		return nil, fmt.Errorf("limits: %w", err)
	}
	if !st.Mode().IsRegular() {
		return nil, &Error{File: path, Msg: "not a regular file (a directory, pipe or device cannot be a limits file)"}
	}
	if st.Size() > MaxFileBytes {
		return nil, &Error{File: path, Msg: fmt.Sprintf("%d bytes is more than a limits file may hold (%d bytes); refused before reading it", st.Size(), MaxFileBytes)}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("limits: %w", err)
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, MaxFileBytes+1))
	if err != nil {
		return nil, fmt.Errorf("limits: %w", err)
	}
	return data, nil
}

var typeErr = regexp.MustCompile(`^toml: line (\d+) \(last key "([^"]*)"\): (.*)$`)

func decodeError(name string, err error) error {
	var pe toml.ParseError
	if errors.As(err, &pe) {
		return &Error{File: name, Line: pe.Position.Line, Key: pe.LastKey, Msg: pe.Message}
	}
	// Type mismatches come as "toml: line N (last key "K"): message".
	if m := typeErr.FindStringSubmatch(err.Error()); m != nil {
		line, _ := strconv.Atoi(m[1])
		return &Error{File: name, Line: line, Key: m[2], Msg: m[3]}
	}
	return &Error{File: name, Msg: "cannot read", Err: err}
}
