package timeline_test

import (
	"fmt"
	"strings"

	"gyrebench/sim"
	"gyrebench/sim/timeline"
)

// A timeline is the scenario plus what was done to the run; Format writes
// it as a file that 'gyrebench run' replays.
func ExampleTimeline_Format() {
	tl := &timeline.Timeline{
		Config: sim.DefaultConfig(),
		Events: []timeline.Event{
			{Step: 120, Time: 7200, Cmd: timeline.SetScheme, Scheme: "apvm"},
			{Step: 240, Time: 14400, Cmd: timeline.Mark, Label: "the vortex splits"},
		},
		EndStep: 300, EndTime: 18000,
	}
	if err := tl.Validate(); err != nil {
		fmt.Println(err)
		return
	}
	text := string(tl.Format())
	fmt.Print(text[strings.Index(text, "[timeline]"):])
	// Output:
	// [timeline]
	// version = 1
	// end_step = 300
	// end_time = 18000.0
	//
	// [[event]]
	// step = 120
	// time = 7200.0
	// cmd = "set-scheme"
	// scheme = "apvm"
	//
	// [[event]]
	// step = 240
	// time = 14400.0
	// cmd = "mark"
	// label = "the vortex splits"
}
