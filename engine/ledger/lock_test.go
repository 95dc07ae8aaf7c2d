package ledger

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

func mustLock(t *testing.T, path string) *Locked {
	t.Helper()
	l, err := Lock(path)
	if err != nil {
		t.Fatalf("Lock: %v", err)
	}
	t.Cleanup(func() { l.Unlock() })
	return l
}

func TestLockedRoundTrip(t *testing.T) {
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	l := mustLock(t, path)
	recs, err := l.Records()
	if err != nil || recs != nil {
		t.Fatalf("Records of a new ledger = %v, %v; want an empty ledger", recs, err)
	}
	var stored []Record
	for i := range 3 {
		rec, err := l.Append(sample(i))
		if err != nil {
			t.Fatalf("Append %d: %v", i, err)
		}
		stored = append(stored, rec)
	}
	recs, err = l.Records()
	if err != nil {
		t.Fatal(err)
	}
	if err := l.Unlock(); err != nil {
		t.Fatalf("Unlock: %v", err)
	}
	if err := l.Unlock(); err != nil {
		t.Errorf("second Unlock: %v", err)
	}
	if _, err := os.Stat(path + ".lock"); err != nil {
		t.Errorf("lock file: %v", err)
	}

	read, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 3 || len(read) != 3 {
		t.Fatalf("Records gave %d records and Read %d, want 3", len(recs), len(read))
	}
	for i := range stored {
		a, _ := json.Marshal(stored[i])
		b, _ := json.Marshal(recs[i])
		c, _ := json.Marshal(read[i])
		if !bytes.Equal(a, b) || !bytes.Equal(a, c) {
			t.Errorf("record %d: Append returned\n%s\nRecords\n%s\nRead\n%s", i, a, b, c)
		}
	}

	// A released Locked refuses to be used, and leaves the ledger alone.
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := l.Append(sample(9)); !errors.Is(err, errUnlocked) {
		t.Errorf("Append after Unlock: error %v, want %v", err, errUnlocked)
	}
	if _, err := l.Records(); !errors.Is(err, errUnlocked) {
		t.Errorf("Records after Unlock: error %v, want %v", err, errUnlocked)
	}
	after, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(before, after) {
		t.Error("Append after Unlock changed the ledger")
	}
}

func TestLockedBrokenLedger(t *testing.T) {
	path := ledgerWith(t, 3)
	ls := lines(t, path)
	ls[1] = bytes.Replace(ls[1], []byte(`"rows":480`), []byte(`"rows":481`), 1)
	writeLines(t, path, ls)
	l := mustLock(t, path)
	_, err := l.Records()
	wantChainError(t, err, 2)
	_, err = l.Append(sample(9))
	wantChainError(t, err, 2)
}

// TestLockExcludes holds the lock while another goroutine asks for it, and
// checks by the ledger's contents that the other got it only after Unlock:
// when its Lock returns, both of the holder's records must already be there.
func TestLockExcludes(t *testing.T) {
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	first := mustLock(t, path)
	if _, err := first.Append(sample(0)); err != nil {
		t.Fatal(err)
	}

	acquired := make(chan int, 1) // the number of records the second holder saw
	done := make(chan error, 1)
	go func() {
		second, err := Lock(path)
		if err != nil {
			close(acquired)
			done <- err
			return
		}
		defer second.Unlock()
		recs, err := second.Records()
		acquired <- len(recs)
		if err == nil {
			_, err = second.Append(sample(2))
		}
		done <- err
	}()

	// A weak check: the second Lock has not returned a moment later. The
	// check that matters is the record count below, which does not depend on
	// timing.
	select {
	case n := <-acquired:
		t.Fatalf("second Lock returned while the first was held (it saw %d records)", n)
	case <-time.After(50 * time.Millisecond):
	}
	if _, err := first.Append(sample(1)); err != nil {
		t.Fatal(err)
	}
	if err := first.Unlock(); err != nil {
		t.Fatal(err)
	}

	select {
	case n, ok := <-acquired:
		if !ok {
			t.Fatalf("second Lock: %v", <-done)
		}
		if n != 2 {
			t.Errorf("second holder saw %d records, want the first holder's 2", n)
		}
	case <-time.After(30 * time.Second):
		t.Fatal("second Lock still waiting 30s after Unlock")
	}
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	recs, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	var order []int64
	for _, r := range recs {
		order = append(order, r.Outputs[0].Bytes-900) // sample(i) writes 900+i bytes
	}
	if len(order) != 3 || order[0] != 0 || order[1] != 1 || order[2] != 2 {
		t.Errorf("records in order %v, want [0 1 2]", order)
	}
}

// TestConcurrentLocked runs goroutines that each do what a run does under
// the lock: read the ledger, append, read again. Under the lock nobody else
// may append in between, so each sees exactly its own record added.
func TestConcurrentLocked(t *testing.T) {
	path := filepath.Join(t.TempDir(), "sensors.ledger.jsonl")
	const runs = 12
	var wg sync.WaitGroup
	errs := make(chan error, runs)
	for g := range runs {
		wg.Go(func() {
			l, err := Lock(path)
			if err != nil {
				errs <- err
				return
			}
			defer l.Unlock()
			before, err := l.Records()
			if err != nil {
				errs <- err
				return
			}
			rec, err := l.Append(sample(g))
			if err != nil {
				errs <- err
				return
			}
			after, err := l.Records()
			if err != nil {
				errs <- err
				return
			}
			if len(after) != len(before)+1 || after[len(after)-1].RunSHA256 != rec.RunSHA256 {
				t.Errorf("run %d: %d records before its Append, %d after, last not its own", g, len(before), len(after))
			}
		})
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
	recs, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != runs {
		t.Errorf("%d records, want %d", len(recs), runs)
	}
}

// TestLockContextCancel cancels a wait for a held lock: LockContext reports
// that it waits, once, and returns context.Canceled as soon as it is
// cancelled, not at its next poll or later.
func TestLockContextCancel(t *testing.T) {
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	mustLock(t, path)

	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var calls atomic.Int32
	waiting := make(chan struct{})
	done := make(chan error, 1)
	go func() {
		l, err := LockContext(ctx, path, func() {
			if calls.Add(1) == 1 {
				close(waiting)
			}
		})
		if err == nil {
			l.Unlock()
		}
		done <- err
	}()
	select {
	case <-waiting:
	case err := <-done:
		t.Fatalf("LockContext returned %v while the lock was held", err)
	case <-time.After(30 * time.Second):
		t.Fatal("waiting not called within 30s while the lock was held")
	}
	time.Sleep(300 * time.Millisecond) // let it poll a few times, up to the longest interval
	cancel()
	// It watches ctx.Done() between polls, so it returns at once; 5s is
	// slack for a loaded machine under -race.
	select {
	case err := <-done:
		if !errors.Is(err, context.Canceled) {
			t.Errorf("LockContext = %v, want context.Canceled", err)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("LockContext still waiting 5s after the cancel")
	}
	if n := calls.Load(); n != 1 {
		t.Errorf("waiting called %d times, want once", n)
	}
}

func TestLockContextCancelled(t *testing.T) {
	// A context that is already done is reported without taking the lock.
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if l, err := LockContext(ctx, path, nil); !errors.Is(err, context.Canceled) {
		if err == nil {
			l.Unlock()
		}
		t.Errorf("LockContext with a cancelled context = %v, want context.Canceled", err)
	}
}

func TestLockContextFree(t *testing.T) {
	// A free lock is taken at the first try, without a word.
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	l, err := LockContext(context.Background(), path, func() { t.Error("waiting called for a free lock") })
	if err != nil {
		t.Fatal(err)
	}
	if err := l.Unlock(); err != nil {
		t.Fatal(err)
	}
}

// TestLockContextWaits holds the lock while LockContext waits for it, then
// unlocks: the waiter takes the lock and sees the holder's record.
func TestLockContextWaits(t *testing.T) {
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	first := mustLock(t, path)

	var calls atomic.Int32
	waiting := make(chan struct{})
	type result struct {
		records int
		err     error
	}
	done := make(chan result, 1)
	go func() {
		l, err := LockContext(context.Background(), path, func() {
			if calls.Add(1) == 1 {
				close(waiting)
			}
		})
		if err != nil {
			done <- result{err: err}
			return
		}
		defer l.Unlock()
		recs, err := l.Records()
		done <- result{len(recs), err}
	}()

	select {
	case <-waiting:
	case r := <-done:
		t.Fatalf("LockContext returned (%d records, %v) while the lock was held", r.records, r.err)
	case <-time.After(30 * time.Second):
		t.Fatal("waiting not called within 30s while the lock was held")
	}
	if _, err := first.Append(sample(0)); err != nil {
		t.Fatal(err)
	}
	if err := first.Unlock(); err != nil {
		t.Fatal(err)
	}
	select {
	case r := <-done:
		if r.err != nil {
			t.Fatal(r.err)
		}
		if r.records != 1 {
			t.Errorf("waiter saw %d records, want the holder's 1", r.records)
		}
	case <-time.After(30 * time.Second):
		t.Fatal("LockContext still waiting 30s after Unlock")
	}
	if n := calls.Load(); n != 1 {
		t.Errorf("waiting called %d times, want once", n)
	}
}
