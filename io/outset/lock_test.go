package outset

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A held lock refuses a second taker, naming the holder's PID and start;
// released, it can be taken again, and the lock file is emptied.
func TestLockRefusesASecondRun(t *testing.T) {
	folder := filepath.Join(t.TempDir(), "job")
	a, err := Acquire(context.Background(), folder, LockOptions{})
	require.NoError(t, err)
	b, _ := os.ReadFile(lockPath(folder))
	var h Holder
	require.NoError(t, json.Unmarshal(b, &h))
	assert.Equal(t, os.Getpid(), h.PID)
	assert.WithinDuration(t, time.Now(), h.Started, 2*time.Second)

	// flock(2) locks belong to an open file: a second open in the same
	// process conflicts as another process's would.
	_, err = Acquire(context.Background(), folder, LockOptions{})
	var held *HeldError
	require.ErrorAs(t, err, &held)
	assert.Equal(t, os.Getpid(), held.Holder.PID)
	assert.Contains(t, err.Error(), fmt.Sprintf("%s is in use by PID %d on ", folder, os.Getpid()))
	assert.Contains(t, err.Error(), ", started "+h.Started.Format(time.RFC3339))
	assert.Contains(t, err.Error(), "(-wait)")

	a.Release()
	a.Release() // harmless twice
	b, _ = os.ReadFile(lockPath(folder))
	assert.Empty(t, b, "a released lock file is empty")
	c, err := Acquire(context.Background(), folder, LockOptions{})
	require.NoError(t, err)
	c.Release()
}

// A waiting taker says whom it waits for and gets the lock once it is
// released; its context ends the wait.
func TestLockWaits(t *testing.T) {
	folder := filepath.Join(t.TempDir(), "out")
	a, err := Acquire(context.Background(), folder, LockOptions{})
	require.NoError(t, err)
	var log syncBuffer
	got := make(chan error)
	go func() {
		l, err := Acquire(context.Background(), folder, LockOptions{Wait: true, Log: &log})
		if err == nil {
			l.Release()
		}
		got <- err
	}()
	// The waiter has said it waits before a.Release: then it must get
	// the lock after.
	for !strings.Contains(log.String(), "waiting for PID") {
		time.Sleep(time.Millisecond)
	}
	a.Release()
	require.NoError(t, <-got)
	assert.Contains(t, log.String(), fmt.Sprintf("geored: waiting for PID %d on ", os.Getpid()))

	a, err = Acquire(context.Background(), folder, LockOptions{})
	require.NoError(t, err)
	defer a.Release()
	ctx, cancel := context.WithCancelCause(context.Background())
	cancel(errors.New("stopped by SIGTERM"))
	_, err = Acquire(ctx, folder, LockOptions{Wait: true})
	assert.EqualError(t, err, "stopped by SIGTERM")
}

// A lock file that names a holder while its lock is free was left by a
// run that died: it is taken over with a message naming that run.
func TestLockTakesOverAStaleLockFile(t *testing.T) {
	folder := filepath.Join(t.TempDir(), "out")
	stale := `{"pid":4194999,"host":"survey-server","started":"2026-12-01T23:00:00Z","folder":"x"}`
	require.NoError(t, os.WriteFile(lockPath(folder), []byte(stale+"\n"), 0o644))
	var log bytes.Buffer
	l, err := Acquire(context.Background(), folder, LockOptions{Log: &log})
	require.NoError(t, err)
	defer l.Release()
	assert.Equal(t, "geored: taking over the lock of "+folder+" from PID 4194999 on survey-server, started 2026-12-01T23:00:00Z, which ended without releasing it\n", log.String())
	b, _ := os.ReadFile(lockPath(folder))
	assert.Contains(t, string(b), fmt.Sprintf(`"pid":%d`, os.Getpid()))
}

// syncBuffer is a bytes.Buffer safe for a writer and a reader at once.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}
