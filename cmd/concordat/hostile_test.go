package main

import (
	"os"
	"strconv"
	"strings"

	"github.com/rogpeppe/go-internal/testscript"
)

// Script commands that make hostile files, which a txtar file cannot hold
// as written: bytes that are not UTF-8, a byte order mark, CR line ends,
// and recipes nested thousands of levels deep.

// unescape decodes \xHH, \r, \t, \n and \\ in s.
func unescape(ts *testscript.TestScript, s string) []byte {
	var out []byte
	for i := 0; i < len(s); i++ {
		if s[i] != '\\' || i+1 == len(s) {
			out = append(out, s[i])
			continue
		}
		i++
		switch s[i] {
		case 'r':
			out = append(out, '\r')
		case 't':
			out = append(out, '\t')
		case 'n':
			out = append(out, '\n')
		case '\\':
			out = append(out, '\\')
		case 'x':
			if i+2 >= len(s) {
				ts.Fatalf("short \\x escape in %q", s)
			}
			b, err := strconv.ParseUint(s[i+1:i+3], 16, 8)
			if err != nil {
				ts.Fatalf("bad \\x escape in %q", s)
			}
			out = append(out, byte(b))
			i += 2
		default:
			ts.Fatalf("unknown escape \\%c in %q", s[i], s)
		}
	}
	return out
}

// cmdUnescape rewrites a file with its escapes decoded (see unescape):
// "unescape FILE". Line ends of the txtar stay \n; write \r before them
// for CRLF.
func cmdUnescape(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 1 {
		ts.Fatalf("usage: unescape FILE")
	}
	path := ts.MkAbs(args[0])
	data, err := os.ReadFile(path)
	ts.Check(err)
	ts.Check(os.WriteFile(path, unescape(ts, string(data)), 0o644))
}

// cmdRepeat appends TEXT (escapes decoded) N times to FILE:
// "repeat FILE N TEXT".
func cmdRepeat(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 3 {
		ts.Fatalf("usage: repeat FILE N TEXT")
	}
	n, err := strconv.Atoi(args[1])
	if err != nil || n < 0 {
		ts.Fatalf("bad count %q", args[1])
	}
	f, err := os.OpenFile(ts.MkAbs(args[0]), os.O_CREATE|os.O_APPEND|os.O_WRONLY, 0o644)
	ts.Check(err)
	_, err = f.Write([]byte(strings.Repeat(string(unescape(ts, args[2])), n)))
	ts.Check(err)
	ts.Check(f.Close())
}
