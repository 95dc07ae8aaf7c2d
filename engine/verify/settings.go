package verify

import (
	"bytes"
	"encoding/json"
	"fmt"
	"slices"
	"strconv"
)

// diffSettings compares two encodings of a recipe's resolved settings and
// returns one line per value that differs, named by its place, e.g.
// `tests["grade_ordinal"].permutations: recorded 5000, now 6000`. Lists of
// objects that have a "name" are matched by name, so inserting a block
// names the block rather than every block after it.
func diffSettings(old, new json.RawMessage, l labels) []string {
	var o, n any
	if err := decodeJSON(old, &o); err != nil {
		return []string{fmt.Sprintf("the %s settings cannot be read: %v", l.old, err)}
	}
	if err := decodeJSON(new, &n); err != nil {
		return []string{fmt.Sprintf("the %s settings cannot be read: %v", l.new, err)}
	}
	var out []string
	diffValue("", o, n, l, &out)
	return out
}

func decodeJSON(data []byte, v any) error {
	if len(data) == 0 {
		data = []byte("null")
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	return dec.Decode(v)
}

func diffValue(path string, o, n any, l labels, out *[]string) {
	where := path
	if where == "" {
		where = "settings"
	}
	switch ov := o.(type) {
	case map[string]any:
		nv, ok := n.(map[string]any)
		if !ok {
			break
		}
		keys := make([]string, 0, len(ov)+len(nv))
		for k := range ov {
			keys = append(keys, k)
		}
		for k := range nv {
			if _, dup := ov[k]; !dup {
				keys = append(keys, k)
			}
		}
		slices.Sort(keys)
		for _, k := range keys {
			p := k
			if path != "" {
				p = path + "." + k
			}
			a, inOld := ov[k]
			b, inNew := nv[k]
			switch {
			case !inOld:
				*out = append(*out, fmt.Sprintf("%s: only %s, %s", p, l.new, compact(b)))
			case !inNew:
				*out = append(*out, fmt.Sprintf("%s: only %s, %s", p, l.old, compact(a)))
			default:
				diffValue(p, a, b, l, out)
			}
		}
		return
	case []any:
		nv, ok := n.([]any)
		if !ok {
			break
		}
		if on, nn := names(ov), names(nv); on != nil && nn != nil {
			for i, name := range on {
				p := fmt.Sprintf("%s[%s]", path, strconv.Quote(name))
				if j := slices.Index(nn, name); j >= 0 {
					diffValue(p, ov[i], nv[j], l, out)
				} else {
					*out = append(*out, fmt.Sprintf("%s: only %s", p, l.old))
				}
			}
			for _, name := range nn {
				if !slices.Contains(on, name) {
					*out = append(*out, fmt.Sprintf("%s[%s]: only %s", path, strconv.Quote(name), l.new))
				}
			}
			return
		}
		if len(ov) == len(nv) && !scalars(ov) {
			for i := range ov {
				diffValue(fmt.Sprintf("%s[%d]", path, i), ov[i], nv[i], l, out)
			}
			return
		}
	}
	if a, b := compact(o), compact(n); a != b {
		*out = append(*out, fmt.Sprintf("%s: %s %s, %s %s", where, l.old, a, l.new, b))
	}
}

// names returns the "name" of each element when every element is an
// object with a distinct string name, else nil.
func names(list []any) []string {
	if len(list) == 0 {
		return nil
	}
	out := make([]string, 0, len(list))
	for _, v := range list {
		m, ok := v.(map[string]any)
		if !ok {
			return nil
		}
		s, ok := m["name"].(string)
		if !ok || slices.Contains(out, s) {
			return nil
		}
		out = append(out, s)
	}
	return out
}

// scalars reports whether a list holds no objects or lists, so that it is
// shown whole when it differs.
func scalars(list []any) bool {
	for _, v := range list {
		switch v.(type) {
		case map[string]any, []any:
			return false
		}
	}
	return true
}

func compact(v any) string {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return fmt.Sprint(v)
	}
	return string(bytes.TrimSpace(buf.Bytes()))
}
