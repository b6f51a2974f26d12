package watch

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"testing"
	"time"
)

// TestGroup_FollowTagged follows the logs of several runs into one channel:
// each batch carries its run's tag, and every epoch of every run arrives.
func TestGroup_FollowTagged(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	g, err := NewGroup(GroupOptions{})
	if err != nil {
		t.Fatal(err)
	}
	go g.Run(ctx)
	root := t.TempDir()
	out := make(chan Tagged, 8)
	const runs = 5
	paths := make([]string, runs)
	for i := range paths {
		paths[i] = filepath.Join(root, fmt.Sprint(i), "metrics.csv")
		os.MkdirAll(filepath.Dir(paths[i]), 0o755)
		os.WriteFile(paths[i], []byte("epoch,loss,val_loss\n1,0.5,0.6\n"), 0o644)
		if err := g.FollowTagged(ctx, i, paths[i], Options{}, out); err != nil {
			t.Fatal(err)
		}
	}
	for i, p := range paths {
		f, _ := os.OpenFile(p, os.O_APPEND|os.O_WRONLY, 0)
		fmt.Fprintf(f, "2,0.4,0.%d\n", 5+i)
		f.Close()
	}
	epochs := map[int]int{}
	deadline := time.After(10 * time.Second)
	for len(epochs) < runs || !allAt(epochs, 2) {
		select {
		case b := <-out:
			for _, p := range b.Points {
				epochs[b.Tag] = max(epochs[b.Tag], p.Epoch)
			}
		case <-deadline:
			t.Fatalf("epochs by run %v", epochs)
		}
	}
	if err := g.FollowTagged(ctx, 9, root, Options{}, out); err == nil {
		t.Error("a directory was followed")
	}
	// Follow: a channel of its own, closed after ctx ends.
	one, cancelOne := context.WithCancel(ctx)
	ch, err := g.Follow(one, paths[0], Options{})
	if err != nil {
		t.Fatal(err)
	}
	if b := <-ch; len(b.Points) != 2 {
		t.Errorf("first batch of Follow: %d points, want 2", len(b.Points))
	}
	cancelOne()
	for range ch {
	}
}

func allAt(m map[int]int, epoch int) bool {
	for _, e := range m {
		if e < epoch {
			return false
		}
	}
	return true
}
