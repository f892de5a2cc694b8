package limits

import (
	"strconv"
	"strings"
)

// MetricInfo describes a metric that a limit can be set on. The list of
// them (Metrics) is the project's one registry of metrics: limits checks
// and words its reasons with it, and the record's value of each is
// assess.Metric.Value (by the same key, the record's JSON key); the
// dashboard, the store and the report page read it from there.
type MetricInfo struct {
	Name     string // key in the limits file and the JSON record
	Label    string // plain words for reasons
	Unit     string // "°C", "s", "%", "°C/s" or "" (a ratio)
	Decimals int    // shown in reasons
}

var metricList = []MetricInfo{
	{"pour_peak_c", "pour peak", "°C", 1},
	{"liquidus_c", "liquidus arrest", "°C", 1},
	{"liquidus_min_c", "primary undercooling minimum", "°C", 1},
	{"eutectic_min_c", "eutectic minimum", "°C", 1},
	{"eutectic_max_c", "eutectic maximum", "°C", 1},
	{"recalescence_c", "eutectic recalescence", "°C", 1},
	{"solidus_c", "end of freezing", "°C", 1},
	{"undercooling_c", "eutectic undercooling", "°C", 1},
	{"chill_margin_c", "chill margin", "°C", 1},
	{"ce", "carbon equivalent from the liquidus", "", 2},
	{"ce_classic", "carbon equivalent C + (Si + P)/3", "", 2},
	{"c_pct", "carbon", "%", 2},
	{"si_pct", "silicon", "%", 2},
	{"alpha_undercooling_c", "α-Al nucleation undercooling", "°C", 1},
	{"alpha_recalescence_c", "α-Al recalescence", "°C", 2},
	{"eutectic_depression_c", "eutectic depression", "°C", 1},
	{"plateau_c", "freezing plateau", "°C", 2},
	{"fixed_point_error_c", "plateau minus the fixed point", "°C", 2},
	{"fixed_point_undercooling_c", "check-cup undercooling below its plateau", "°C", 2},
	{"pour_superheat_c", "pour superheat in the cup", "°C", 0},
	{"plateau_s", "eutectic plateau duration", "s", 0},
	{"freezing_time_s", "freezing time", "s", 0},
	{"cooling_rate_c_per_s", "cooling rate", "°C/s", 2},
	{"f_theta", "nucleation potency factor f(θ)", "", 5},
	{"theta_deg", "effective contact angle", "°", 1},
	// The solidification path (docs/solidification.md).
	{"fs_at_liquidus", "fraction solid at the liquidus arrest", "", 2},
	{"fs_at_eutectic_start", "fraction solid at the eutectic start", "", 2},
	{"fs_at_eutectic_min", "fraction solid at the eutectic minimum", "", 2},
	{"fs_at_eutectic_max", "fraction solid at the eutectic maximum", "", 2},
	{"fs_at_end_of_freezing", "fraction solid at the end of freezing", "", 2},
	{"latent_heat_newtonian_j_per_kg", "apparent latent heat (Newtonian)", "J/kg", 0},
	{"latent_heat_fourier_j_per_kg", "latent heat (Fourier)", "J/kg", 0},
	{"coherency_c", "dendrite coherency temperature", "°C", 1},
	{"fs_at_coherency", "fraction solid at dendrite coherency", "", 2},
}

var metricIndex = func() map[string]MetricInfo {
	m := make(map[string]MetricInfo, len(metricList))
	for _, mi := range metricList {
		m[mi.Name] = mi
	}
	return m
}()

// Metric describes the named metric.
func Metric(name string) (MetricInfo, bool) {
	mi, ok := metricIndex[name]
	return mi, ok
}

// Metrics lists every metric a limit can be set on, in a fixed order.
func Metrics() []MetricInfo { return append([]MetricInfo(nil), metricList...) }

// Format writes v with the metric's decimals and unit: "1139.2 °C", "4.21".
func (m MetricInfo) Format(v float64) string {
	s := strconv.FormatFloat(v, 'f', m.Decimals, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-") // a value that rounds to zero is "0.0", never "-0.0"
	}
	if m.Unit == "" {
		return s
	}
	return s + " " + m.Unit
}

// metricOrder ranks metrics for stable output.
func metricOrder(name string) int {
	for i, m := range metricList {
		if m.Name == name {
			return i
		}
	}
	return len(metricList)
}
