package logging

import (
	"bytes"
	"sync"
)

// Buffer collects log lines in memory, safe for concurrent use: the
// logger's syncer writes from its own goroutine while a reader looks. The
// tests of this package and of cmd/api read their log lines back from it.
type Buffer struct {
	mu  sync.Mutex
	buf bytes.Buffer
}

func (b *Buffer) Write(p []byte) (int, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.Write(p)
}

// String returns every line written so far.
func (b *Buffer) String() string {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.String()
}
