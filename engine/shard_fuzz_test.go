package engine

import (
	"bytes"
	"context"
	"testing"
)

// FuzzDecodeShardFile feeds shard files, real and damaged, to the reader:
// it never panics, and a file it accepts encodes back to a file it reads
// as the same.
func FuzzDecodeShardFile(f *testing.F) {
	// A small run: large seeds make every mutation (and minimization) slow.
	p := plan(f, `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  columns = ["a", "b", "c"]
}
test "t" {
  pairing  = "p"
  measures = ["spearman", "kendall_b"]
  adjust   = "holm"
}
`, map[string]string{"d.csv": "a,b,c\n1,2,NA\n2,1,3\n3,4,1\n4,3,2\n5,5,5\n"})
	for _, s := range []Shard{{1, 1}, {2, 3}, {3, 3}} {
		sf, err := ComputeShard(context.Background(), p, s, Options{})
		if err != nil {
			f.Fatal(err)
		}
		var buf bytes.Buffer
		if err := sf.Encode(&buf); err != nil {
			f.Fatal(err)
		}
		f.Add(buf.Bytes())
	}
	f.Add([]byte(`{"format":"concordat-shard/1","shard":{"k":1,"n":1},"records":[{"estimate":"NaN","p_family":-0}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		sf, err := DecodeShardFile(data)
		if err != nil {
			return
		}
		for i := range sf.Records {
			sf.Records[i].result() // may refuse, must not panic
		}
		var buf bytes.Buffer
		if err := sf.Encode(&buf); err != nil {
			t.Fatalf("an accepted file does not encode: %v", err)
		}
		again, err := DecodeShardFile(buf.Bytes())
		if err != nil {
			t.Fatalf("an accepted file, encoded, is refused: %v\n%s", err, buf.Bytes())
		}
		var b2 bytes.Buffer
		if err := again.Encode(&b2); err != nil || !bytes.Equal(b2.Bytes(), buf.Bytes()) {
			t.Fatalf("encoding is not stable:\n%s\n%s", buf.Bytes(), b2.Bytes())
		}
	})
}

// FuzzParseShard: any text is a shard with 1 ≤ K ≤ N, or an error.
func FuzzParseShard(f *testing.F) {
	for _, s := range []string{"1/1", "3/8", "0/4", "4/3", "a/b", "1/", "/", "-1/-1", "99999999999999999999/1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		sh, err := ParseShard(s)
		if err == nil && (sh.K < 1 || sh.K > sh.N || sh.N > maxShards) {
			t.Fatalf("ParseShard(%q) = %v", s, sh)
		}
	})
}
