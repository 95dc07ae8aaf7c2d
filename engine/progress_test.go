package engine

import (
	"bytes"
	"strings"
	"testing"
)

// TestProgressLine: the line counts cells and resampling draws, counts each
// resampling call's growth once even when its reports arrive out of order,
// and is cleared at the end; a nil progress shows nothing.
func TestProgressLine(t *testing.T) {
	var buf bytes.Buffer
	p := newProgress(&buf, 3)
	p.every = 0 // redraw on every report
	d := p.draws()
	d(1024, 4096)
	d(3072, 4096)
	d(2048, 4096) // late report from a slower worker: no growth
	p.cellDone()
	out := buf.String()
	if !strings.Contains(out, "\rcomputing: 1 of 3 cells, 3072 permutation and bootstrap draws") {
		t.Errorf("progress line = %q", out)
	}
	p.finish()
	if !strings.HasSuffix(buf.String(), "\r\x1b[K") {
		t.Errorf("line not cleared: %q", buf.String())
	}

	var none *progress
	none.cellDone()
	none.finish()
	if none.draws() != nil {
		t.Error("a nil progress must give a nil callback")
	}
	if newProgress(nil, 3) != nil {
		t.Error("no writer must mean no progress")
	}
}
