package tui

import "strings"

// Block-character glyphs, five rows tall, for the current reading: legible
// from a couple of metres on a melt-deck screen.
var bigGlyphs = map[rune][5]string{
	'0': {"████", "█  █", "█  █", "█  █", "████"},
	'1': {"  █ ", " ██ ", "  █ ", "  █ ", " ███"},
	'2': {"████", "   █", "████", "█   ", "████"},
	'3': {"████", "   █", " ███", "   █", "████"},
	'4': {"█  █", "█  █", "████", "   █", "   █"},
	'5': {"████", "█   ", "████", "   █", "████"},
	'6': {"████", "█   ", "████", "█  █", "████"},
	'7': {"████", "   █", "  █ ", " █  ", " █  "},
	'8': {"████", "█  █", "████", "█  █", "████"},
	'9': {"████", "█  █", "████", "   █", "████"},
	'.': {"  ", "  ", "  ", "  ", "█ "},
	'-': {"    ", "    ", "████", "    ", "    "},
	' ': {"    ", "    ", "    ", "    ", "    "},
}

// bigHeight is the height of big text in rows.
const bigHeight = 5

// bigText renders s (digits, '.', '-', ' ') in block glyphs, one column of
// space between glyphs. Unknown runes render as blanks.
func bigText(s string) string {
	var rows [bigHeight]strings.Builder
	first := true
	for _, r := range s {
		g, ok := bigGlyphs[r]
		if !ok {
			g = bigGlyphs[' ']
		}
		for i := range rows {
			if !first {
				rows[i].WriteByte(' ')
			}
			rows[i].WriteString(g[i])
		}
		first = false
	}
	out := make([]string, bigHeight)
	for i := range rows {
		out[i] = rows[i].String()
	}
	return strings.Join(out, "\n")
}
