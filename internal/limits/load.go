package limits

import (
	"bytes"
	_ "embed"
	"errors"
	"fmt"
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
// and the key.
func Load(path string) (*Book, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("limits: %w", err)
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
	return s
}

func (e *Error) Unwrap() error { return e.Err }

// Parse decodes and validates the text of a limits file; name is used in
// error messages. A calibration_file it names is not read (Load reads it).
func Parse(data []byte, name string) (*Book, error) {
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
	}
	b.nameInoculants()
	if err := b.validate(data, name); err != nil {
		return nil, err
	}
	return &b, nil
}

// LoadCalibration reads a file holding a [calibration] table.
func LoadCalibration(path string) (*Calibration, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("limits: calibration: %w", err)
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
