package main

import (
	"fmt"
	"sync/atomic"
	"time"
)

// The work floors: the bare server spending a fixed amount of arithmetic
// per request before it answers. Their ratios to bare turn the throughput
// target into a budget of CPU per request, on this machine and at this
// concurrency, for everything a server does beyond writing the bytes.

// workSink keeps the busy loop's result alive, so that it is computed.
var workSink atomic.Uint64

// busy runs n steps of a dependent multiply-add chain: pure CPU, no
// memory traffic, no system calls.
func busy(n int) {
	x := uint64(n)
	for i := 0; i < n; i++ {
		x = x*31 + uint64(i)
	}
	workSink.Add(x)
}

// secondsPerStep times busy at start-up: the fastest of seven runs of
// about 4 ms each, the machine's speed when nothing else competes.
func secondsPerStep() float64 {
	const steps = 1 << 22
	best := time.Duration(1 << 62)
	for i := 0; i < 7; i++ {
		t := time.Now()
		busy(steps)
		best = min(best, time.Since(t))
	}
	return best.Seconds() / steps
}

// workBudget prints the work floors' ratios to bare and reads them as a
// budget. Server and load generator share the cores, so 1/ratio grows
// about linearly with the CPU a server adds per request: the slope is
// fitted through (0, 1) by least squares, and gives the work the target
// ratio leaves, and the work at which the bare server would match the
// ratios of the service and of the service computing every request. The work is the busy loop's, timed alone; under load
// each floor's measured CPU grows by more, which is printed beside it.
func workBudget(res map[*server][]result, servers []*server, work []time.Duration, bareRPS float64, bareCPU time.Duration, serviceRatio, computedRatio float64) {
	fmt.Println("work floors: the bare server spending a fixed amount of arithmetic per request (a busy loop timed alone at")
	fmt.Println("  its start-up) before it answers the same bytes:")
	var num, den float64
	for i, s := range servers {
		f := summarise(res[s])
		r := f.rps / bareRPS
		w := micros(work[i])
		num += w * (1/r - 1)
		den += w * w
		cpu := medianOf(res[s], serverCPU)
		fmt.Printf("  %-10s median %9.0f req/s, ratio to bare %.3f, server CPU %.1f µs/req (%+.1f over bare)\n", s.name, f.rps, r, micros(cpu), micros(cpu-bareCPU))
	}
	slope := num / den
	if slope <= 0 {
		fmt.Println("  the work did not slow the bare server measurably (other work on the machine?); rerun for a budget")
		return
	}
	fmt.Printf("  read as a budget: the ratio %.2f leaves about %.0f µs of such work per request for all the service does\n", targetRatio, (1/targetRatio-1)/slope)
	fmt.Println("  beyond writing the bytes (router, middleware, calculation)")
	for _, x := range []struct {
		name  string
		ratio float64
	}{{"service", serviceRatio}, {"computed", computedRatio}} {
		switch {
		case x.ratio <= 0: // not measured
		case x.ratio >= 1:
			fmt.Printf("  the %s's ratio %.3f is at or above bare (noise?)\n", x.name, x.ratio)
		default:
			fmt.Printf("  at its ratio %.3f the %s answers as the bare server doing about %.0f µs of it would\n", x.ratio, x.name, (1/x.ratio-1)/slope)
		}
	}
}
