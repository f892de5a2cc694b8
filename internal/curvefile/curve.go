// Package curvefile reads and writes the project's open curve-file format:
// UTF-8 text, optional "# key: value" metadata lines, a header row and one
// reading a line (see README.md, "Curve files").
package curvefile

// Meta is one "# key: value" metadata line, kept in file order.
type Meta struct {
	Key   string
	Value string
}

// Curve is one sample's cooling curve as read from a file.
type Curve struct {
	Name  string    // file name (or another label) used in error messages
	Meta  []Meta    // metadata in file order
	Time  []float64 // s
	Temp  []float64 // °C (converted from EMF on reading where the file holds EMF)
	Extra []Column  // further columns, kept, not lost
	// Skipped counts lines that were passed over as noise (blank lines and
	// '#' comment lines that are not "# key: value" metadata); they are
	// never silently lost. Padding rows at the end (see Read) count too.
	Skipped int
	// Notes say what the reader did that the user should be told, each
	// naming the file and the line: columns read as swapped, padding rows
	// dropped, columns or metadata not kept in full. They are not written
	// back to a file.
	Notes []string
}

// Column is an extra data column kept from the file.
type Column struct {
	Name   string
	Values []string // raw text, one per reading
}

// Get returns the value of the first metadata line with the key, or "".
func (c *Curve) Get(key string) string {
	for _, m := range c.Meta {
		if m.Key == key {
			return m.Value
		}
	}
	return ""
}

// Set replaces the value of key, or appends it.
func (c *Curve) Set(key, value string) {
	for i := range c.Meta {
		if c.Meta[i].Key == key {
			c.Meta[i].Value = value
			return
		}
	}
	c.Meta = append(c.Meta, Meta{Key: key, Value: value})
}
