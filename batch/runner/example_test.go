package runner_test

import (
	"context"
	"fmt"

	"gridstage/batch/runner"
)

func ExampleRun() {
	squares := func(_ context.Context, i int) (int, error) { return i * i, nil }
	print := func(i, v int, err error) error {
		fmt.Println(i, v)
		return nil
	}
	rep, err := runner.Run(context.Background(), 4, runner.Options{Workers: 3}, squares, print)
	fmt.Println(rep.Done, err)
	// Output:
	// 0 0
	// 1 1
	// 2 4
	// 3 9
	// 4 <nil>
}
