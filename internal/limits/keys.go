package limits

import "strings"

// keyLines maps every dotted key of a TOML text (table headers, key = value
// lines, the keys of inline tables) to its 1-based line, so that
// validation errors can name the line. Text scanText cannot follow gives
// an empty map (every key then has line 0).
func keyLines(data []byte) map[string]int {
	doc, err := scanText(data)
	if err != nil {
		return map[string]int{}
	}
	return doc.lines()
}

// lineOf returns the line of a dotted key (parts joined by "."), or of its
// nearest enclosing table, or 0.
func lineOf(data []byte, key string) int {
	return lineIn(keyLines(data), key)
}

func lineIn(lines map[string]int, key string) int {
	for k := key; k != ""; {
		if n, ok := lines[k]; ok {
			return n
		}
		i := strings.LastIndexByte(k, '.')
		if i < 0 {
			break
		}
		k = k[:i]
	}
	return 0
}
