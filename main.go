// Command gyrebench is a workbench for discretisations of the rotating
// shallow-water equations: `gyrebench serve` (also plain `go run .`) opens
// the live browser workbench; `run`, `scenarios` and `bench` work headless.
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"os/signal"
	"syscall"

	"gyrebench/server"
	"gyrebench/sim/cli"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	args := os.Args[1:]
	if len(args) == 0 || args[0] == "serve" {
		if len(args) > 0 {
			args = args[1:]
		}
		os.Exit(serve(ctx, args))
	}
	os.Exit(cli.Main(ctx, args, os.Stdout, os.Stderr))
}

func serve(ctx context.Context, args []string) int {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	addr := fs.String("addr", "127.0.0.1:8080", "listen address; anything but loopback exposes the workbench to the network")
	scenario := fs.String("scenario", "", "built-in scenario name or scenario file to open (default: the built-in default)")
	workers := fs.Int("workers", 0, "goroutines per run for the tendency loops (0: by mesh size)")
	ring := fs.Int("ring", 64, "recent states kept per run for scrubbing back after a blow-up")
	fps := fs.Int("fps", server.DefaultMaxFPS, fmt.Sprintf("most field frames per second sent to each watcher (1 to %d)", server.MaxFPSLimit))
	var hosts []string
	fs.Func("host", "a name the workbench also answers to, such as the machine's LAN name (repeatable); requests naming any other host are refused", func(v string) error {
		hosts = append(hosts, v)
		return nil
	})
	maxRuns := fs.Int("max-runs", server.DefaultMaxRuns, fmt.Sprintf("most live runs and pairs held at once (1 to %d)", server.MaxRunsLimit))
	share := fs.Bool("share", false, "show the runs to a group: everyone watches, only the control URL printed at start drives them (implied by an --addr beyond loopback)")
	var controlKey string
	keyGiven := false
	fs.Func("control-key", fmt.Sprintf("the key of the control URL, at least %d characters (default: a random one); implies --share", server.MinControlKey), func(v string) error {
		controlKey, keyGiven = v, true
		return nil
	})
	sweeps := fs.String("sweeps", "", "folder for the sweeps started from the workbench, one new folder each (default: gyrebench/sweeps in the user cache folder)")
	if err := fs.Parse(args); err != nil {
		return cli.ExitBadInput
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(os.Stderr, "gyrebench serve: unexpected argument %q\n", fs.Arg(0))
		return cli.ExitBadInput
	}
	if *ring < 1 || *ring > server.MaxRingSize {
		fmt.Fprintf(os.Stderr, "gyrebench serve: --ring %d: allowed 1 to %d recent states per run\n", *ring, server.MaxRingSize)
		return cli.ExitBadInput
	}
	if *fps < 1 || *fps > server.MaxFPSLimit {
		fmt.Fprintf(os.Stderr, "gyrebench serve: --fps %d: allowed 1 to %d field frames per second\n", *fps, server.MaxFPSLimit)
		return cli.ExitBadInput
	}
	if *maxRuns < 1 || *maxRuns > server.MaxRunsLimit {
		fmt.Fprintf(os.Stderr, "gyrebench serve: --max-runs %d: allowed 1 to %d live runs and pairs\n", *maxRuns, server.MaxRunsLimit)
		return cli.ExitBadInput
	}
	if keyGiven {
		if err := server.CheckControlKey(controlKey); err != nil {
			fmt.Fprintf(os.Stderr, "gyrebench serve: %v\n", err)
			return cli.ExitBadInput
		}
	}
	err := server.Serve(ctx, server.Options{Addr: *addr, Workers: *workers, RingSize: *ring, Scenario: *scenario, Stderr: os.Stderr, SweepDir: *sweeps, MaxFPS: *fps, Hosts: hosts, MaxRuns: *maxRuns, Share: *share, ControlKey: controlKey})
	if err != nil {
		fmt.Fprintf(os.Stderr, "gyrebench serve: %v\n", err)
		return cli.ExitBadInput
	}
	return cli.ExitOK
}
