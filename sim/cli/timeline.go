package cli

import (
	"fmt"
	"os"
	"strings"

	"gyrebench/sim/scenario"
	"gyrebench/sim/timeline"
)

// loadRun reads what 'gyrebench run' runs and applies the --set overrides:
// a timeline file (package timeline), returned with its scenario, or a
// scenario file or built-in name (Load), returned with a nil timeline.
//
// A timeline replays a recorded run exactly, so only output.* keys may be
// overridden for it; anything else would change the run being replayed.
func loadRun(fileOrName string, sets []string) (*scenario.Scenario, *timeline.Timeline, error) {
	tl, err := readTimeline(fileOrName)
	if err != nil {
		return nil, nil, err
	}
	if tl == nil {
		sc, err := Load(fileOrName)
		if err != nil {
			return nil, nil, err
		}
		for _, s := range sets {
			if err := scenario.Set(&sc.Config, s); err != nil {
				return nil, nil, err
			}
		}
		return sc, nil, nil
	}
	for _, s := range sets {
		key, _, _ := strings.Cut(s, "=")
		if key = strings.TrimSpace(key); !strings.HasPrefix(key, "output.") {
			return nil, nil, fmt.Errorf("--set %s: %s is a timeline, which replays a recorded run exactly; only output.* keys may be set (edit the timeline's scenario to change anything else)", s, fileOrName)
		}
		if err := scenario.Set(&tl.Config, s); err != nil {
			return nil, nil, err
		}
	}
	if err := tl.Validate(); err != nil {
		return nil, nil, fmt.Errorf("%s with --set: %w", fileOrName, err)
	}
	return &scenario.Scenario{Description: tl.Description, Config: tl.Config}, tl, nil
}

// readTimeline returns the timeline in file path, or nil when path is not
// a readable timeline file (a built-in name, a scenario, no file).
func readTimeline(path string) (*timeline.Timeline, error) {
	st, err := os.Stat(path)
	if err != nil || st.IsDir() {
		return nil, nil
	}
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	if !timeline.Is(data) {
		return nil, nil
	}
	return timeline.Parse(data, path)
}
