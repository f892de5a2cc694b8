package assess

import (
	"reflect"
	"strings"

	"github.com/undercool-foundry/undercool/internal/limits"
)

// Metric is one entry of the registry of metrics (limits.Metrics: key,
// label, unit, decimals) with its value in a record.
type Metric struct{ limits.MetricInfo }

// Metrics is the registry, in its fixed order: every metric a limit can
// be set on, each with its value in a record (Metric.Value).
func Metrics() []Metric {
	ms := limits.Metrics()
	out := make([]Metric, len(ms))
	for i, m := range ms {
		out[i] = Metric{m}
	}
	return out
}

// Value is the metric's value in r; false when it is null.
func (m Metric) Value(r *Record) (float64, bool) { return Value(r, m.Name) }

// Value is the number of r under its JSON key: a *float64 field of the
// record (a point, its time, a figure) or a figure of its potency (f_theta,
// theta_deg, ...); false when it is null or r has no such number. It
// finds the field by its JSON tag, so a key the record gains is known
// without a list to keep.
func Value(r *Record, key string) (float64, bool) {
	path, ok := numberPaths[key]
	if !ok || r == nil {
		return 0, false
	}
	v := reflect.ValueOf(r).Elem()
	for _, i := range path {
		if v.Kind() == reflect.Pointer {
			if v.IsNil() {
				return 0, false
			}
			v = v.Elem()
		}
		v = v.Field(i)
	}
	switch v.Kind() {
	case reflect.Pointer:
		if v.IsNil() {
			return 0, false
		}
		return v.Elem().Float(), true
	case reflect.Float64:
		return v.Float(), true
	}
	return 0, false
}

// numberPaths is every number Value finds, by JSON key: the field index
// path from Record.
var numberPaths = func() map[string][]int {
	paths := map[string][]int{}
	ptr := reflect.TypeFor[*float64]()
	rt := reflect.TypeFor[Record]()
	for i := range rt.NumField() {
		f := rt.Field(i)
		key := jsonKey(f)
		switch {
		case key == "":
		case f.Type == ptr:
			paths[key] = []int{i}
		case f.Type == reflect.TypeFor[*Potency]():
			pt := f.Type.Elem()
			for j := range pt.NumField() {
				g := pt.Field(j)
				if k := jsonKey(g); k != "" && (g.Type == ptr || g.Type.Kind() == reflect.Float64) {
					paths[k] = []int{i, j}
				}
			}
		}
	}
	return paths
}()

func jsonKey(f reflect.StructField) string {
	key, _, _ := strings.Cut(f.Tag.Get("json"), ",")
	if key == "-" {
		return ""
	}
	return key
}
