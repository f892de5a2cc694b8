package limits

import (
	"bufio"
	"bytes"
	"strings"
)

// keyLines maps every dotted key of a TOML text (table headers, key = value
// lines, the keys of one-line inline tables) to its 1-based line, so that
// validation errors can name the line. It reads the plain forms a limits
// file uses; a key it cannot place gets line 0.
func keyLines(data []byte) map[string]int {
	lines := map[string]int{}
	var prefix []string
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(make([]byte, 0, 64*1024), 1<<20)
	n := 0
	inMulti := ""
	for sc.Scan() {
		n++
		line := strings.TrimSpace(sc.Text())
		if inMulti != "" {
			if strings.Contains(line, inMulti) {
				inMulti = ""
			}
			continue
		}
		if line == "" || line[0] == '#' {
			continue
		}
		if line[0] == '[' {
			name := strings.Trim(stripComment(line), "[] \t")
			prefix = splitKey(name)
			record(lines, prefix, n)
			continue
		}
		eq := indexOutsideQuotes(line, '=')
		if eq < 0 {
			continue
		}
		key := append(append([]string(nil), prefix...), splitKey(line[:eq])...)
		record(lines, key, n)
		val := strings.TrimSpace(line[eq+1:])
		for _, q := range []string{`"""`, `'''`} {
			if strings.HasPrefix(val, q) && !strings.Contains(val[3:], q) {
				inMulti = q
			}
		}
		if strings.HasPrefix(val, "{") {
			inner := strings.Trim(stripComment(val), "{} \t")
			for _, part := range strings.Split(inner, ",") {
				if e := indexOutsideQuotes(part, '='); e > 0 {
					record(lines, append(append([]string(nil), key...), splitKey(part[:e])...), n)
				}
			}
		}
	}
	return lines
}

func record(lines map[string]int, key []string, n int) {
	k := strings.Join(key, ".")
	if _, seen := lines[k]; !seen {
		lines[k] = n
	}
}

// splitKey splits a dotted TOML key, removing quotes and spaces.
func splitKey(s string) []string {
	var parts []string
	var cur strings.Builder
	quote := byte(0)
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case quote != 0:
			if c == quote {
				quote = 0
			} else {
				cur.WriteByte(c)
			}
		case c == '"' || c == '\'':
			quote = c
		case c == '.':
			parts = append(parts, strings.TrimSpace(cur.String()))
			cur.Reset()
		default:
			cur.WriteByte(c)
		}
	}
	return append(parts, strings.TrimSpace(cur.String()))
}

func indexOutsideQuotes(s string, want byte) int {
	quote := byte(0)
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case quote != 0:
			if c == quote {
				quote = 0
			}
		case c == '"' || c == '\'':
			quote = c
		case c == want:
			return i
		}
	}
	return -1
}

func stripComment(s string) string {
	if i := indexOutsideQuotes(s, '#'); i >= 0 {
		return s[:i]
	}
	return s
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
