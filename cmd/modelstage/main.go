// Command modelstage is the reference downstream stage of a gridstage
// pipeline. A pipeline host launches it; it reads each chain it is handed
// from the gridstage output files, checks the chain's hashes, and solves the
// Burnside (1998) asset-pricing model, the Brock-Mirman (1972) growth model
// by value-function iteration, or a consumption-savings problem with a
// borrowing limit. Every estimate carries the hash of the chain it used.
// See package gridstage/plugin/modelstage for the models' parameters.
package main

import (
	"errors"
	"fmt"
	"os"

	"gridstage/plugin"
	"gridstage/plugin/modelstage"
)

func main() {
	err := plugin.Serve(&modelstage.Stage{Loader: &plugin.FileLoader{}, Verify: plugin.VerifyData})
	if err != nil {
		fmt.Fprintln(os.Stderr, "modelstage:", err)
		if errors.Is(err, plugin.ErrNotLaunched) {
			os.Exit(2)
		}
		os.Exit(1)
	}
}
