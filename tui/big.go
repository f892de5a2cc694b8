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

// bigLetters are block-character capitals, five rows tall, for the words
// that take the big slot (a verdict, a fault). Most are three cells wide,
// M and N wider, so that MARGINAL fits a cup's facts column.
var bigLetters = map[rune][bigHeight]string{
	'A': {"███", "█ █", "███", "█ █", "█ █"},
	'C': {"███", "█  ", "█  ", "█  ", "███"},
	'D': {"██ ", "█ █", "█ █", "█ █", "██ "},
	'E': {"███", "█  ", "██ ", "█  ", "███"},
	'F': {"███", "█  ", "██ ", "█  ", "█  "},
	'G': {"███", "█  ", "█ █", "█ █", "███"},
	'H': {"█ █", "█ █", "███", "█ █", "█ █"},
	'I': {"███", " █ ", " █ ", " █ ", "███"},
	'K': {"█ █", "█ █", "██ ", "█ █", "█ █"},
	'L': {"█  ", "█  ", "█  ", "█  ", "███"},
	'M': {"█   █", "██ ██", "█ █ █", "█   █", "█   █"},
	'N': {"█  █", "██ █", "█ ██", "█  █", "█  █"},
	'O': {"███", "█ █", "█ █", "█ █", "███"},
	'P': {"███", "█ █", "███", "█  ", "█  "},
	'R': {"███", "█ █", "██ ", "█ █", "█ █"},
	'S': {"███", "█  ", "███", "  █", "███"},
	'T': {"███", " █ ", " █ ", " █ ", " █ "},
	'U': {"█ █", "█ █", "█ █", "█ █", "███"},
	'V': {"█ █", "█ █", "█ █", "█ █", " █ "},
	'?': {"███", "  █", " ██", "   ", " █ "},
	' ': {" ", " ", " ", " ", " "},
}

// bigWord renders an upper-case word in bigLetters, one column between
// letters; ok is false when a letter has no glyph or the word is wider
// than w cells (the caller then shows it in ordinary letters).
func bigWord(s string, w int) (string, bool) {
	var rows [bigHeight]strings.Builder
	for i, r := range []rune(s) {
		g, ok := bigLetters[r]
		if !ok {
			return "", false
		}
		for k := range rows {
			if i > 0 {
				rows[k].WriteByte(' ')
			}
			rows[k].WriteString(g[k])
		}
	}
	if len([]rune(rows[0].String())) > w {
		return "", false
	}
	out := make([]string, bigHeight)
	for i := range rows {
		out[i] = rows[i].String()
	}
	return strings.Join(out, "\n"), true
}
