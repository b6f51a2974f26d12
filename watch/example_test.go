package watch_test

import (
	"context"
	"fmt"
	"strings"

	"github.com/fitgap/fitgap/watch"
)

// A per-step log reads as one point per epoch: the training loss is the
// mean over the epoch's steps, the validation loss as logged.
func ExampleReadAll() {
	log := "epoch,step,loss,val_loss\n1,1,0.9,\n1,2,0.7,0.75\n2,3,0.6,\n2,4,0.4,0.55\n"
	points, stats, err := watch.ReadAll("run.csv", strings.NewReader(log), watch.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, p := range points {
		loss, _ := p.Named("loss")
		val, _ := p.Named("val_loss")
		fmt.Printf("epoch %d: loss %.2f (last %.2f), val_loss %.2f\n", p.Epoch, loss.Value, loss.Last, val.Value)
	}
	fmt.Println(stats.Format, stats.Lines, "lines")
	// Output:
	// epoch 1: loss 0.80 (last 0.70), val_loss 0.75
	// epoch 2: loss 0.50 (last 0.40), val_loss 0.55
	// csv 5 lines
}

// Console output of a training script, from a pipe.
func ExampleFollowReader() {
	out := "Epoch 1/2\n10/10 - loss: 0.52 - val_loss: 0.61\nEpoch 2/2\n10/10 - loss: 0.41 - val_loss: 0.58\n"
	var points int
	for b := range watch.FollowReader(context.Background(), "stdin", strings.NewReader(out), watch.Options{}) {
		for _, p := range b.Points {
			v, _ := p.Named("val_loss")
			fmt.Printf("epoch %d of %d: val_loss %.2f\n", p.Epoch, p.Total, v.Value)
			points++
		}
		if b.Stats.State == watch.StateFinished {
			fmt.Println(b.Stats.Format, "finished")
		}
	}
	// Output:
	// epoch 1 of 2: val_loss 0.61
	// epoch 2 of 2: val_loss 0.58
	// text finished
}
