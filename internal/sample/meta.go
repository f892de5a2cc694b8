package sample

import (
	"slices"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/protocol"
)

// Meta is what the operator (the sample form) or the device (a "!" line)
// says about a sample: the sample keys of the line protocol
// (protocol.SampleKeys: sample, alloy, operator, ladle, furnace, cup, melt,
// heat, note) with their values, in that order, none empty. A Meta is never
// changed once made: With and Merge return new ones.
type Meta []curvefile.Meta

// MetaOf is the sample keys among kv (a device line, a curve file's
// metadata), the last value of a key winning; empty values are dropped.
func MetaOf(kv []curvefile.Meta) Meta {
	var m Meta
	for _, x := range kv {
		if protocol.IsSampleKey(x.Key) {
			m = m.With(x.Key, x.Value)
		}
	}
	return m
}

// Get is the value of key, "" when it has none.
func (m Meta) Get(key string) string {
	for _, x := range m {
		if x.Key == key {
			return x.Value
		}
	}
	return ""
}

// With is m with key set to value ("" removes it); a key that is not a
// sample key is ignored.
func (m Meta) With(key, value string) Meta {
	if !protocol.IsSampleKey(key) {
		return m
	}
	var out Meta
	placed := false
	for _, k := range protocol.SampleKeys() {
		v := m.Get(k)
		if k == key {
			v, placed = value, true
		}
		if v != "" {
			out = append(out, curvefile.Meta{Key: k, Value: v})
		}
	}
	if !placed {
		return m
	}
	return out
}

// Merge is m with every key of o set to o's value.
func (m Meta) Merge(o Meta) Meta {
	out := m
	for _, x := range o {
		out = out.With(x.Key, x.Value)
	}
	return out
}

// Equal reports whether m and o say the same.
func (m Meta) Equal(o Meta) bool { return slices.Equal(m, o) }

// perCup are the keys that name one cup: a sample that starts consumes
// them, so that the next cup never carries the last one's id by mistake.
// The others (alloy, operator, furnace) describe the stand and carry over
// to the next sample until changed.
var perCup = []string{"sample", "ladle", "cup", "melt", "heat", "note"}

// carried is what of m the next sample starts with.
func (m Meta) carried() Meta {
	out := m
	for _, k := range perCup {
		out = out.With(k, "")
	}
	return out
}
