package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"keyceiling/gaussian"
	"keyceiling/results"
	"keyceiling/search"
)

func versionString() string { return results.Version }

// newFlags returns a flag set that reports errors instead of exiting, with a usage text.
func newFlags(name, usage, example string, stdout io.Writer) *pflag.FlagSet {
	fs := pflag.NewFlagSet(name, pflag.ContinueOnError)
	fs.SetOutput(io.Discard)
	fs.Usage = func() {
		fmt.Fprintf(stdout, "Usage: keyceiling %s %s\n\nFlags:\n", name, usage)
		fs.SetOutput(stdout)
		fs.PrintDefaults()
		fs.SetOutput(io.Discard)
		fmt.Fprintf(stdout, "\nExample:\n  %s\n", example)
	}
	return fs
}

// parseFlags parses args; on --help it prints usage and returns errHelp.
func parseFlags(fs *pflag.FlagSet, args []string) error {
	if err := fs.Parse(args); err != nil {
		if err == pflag.ErrHelp {
			return errHelp // pflag has already called fs.Usage
		}
		return badInput("%v", err)
	}
	return nil
}

// parseNumber parses a finite float, or "inf" when allowInf.
func parseNumber(name, s string, allowInf bool) (float64, error) {
	t := strings.TrimSpace(strings.ToLower(s))
	if allowInf && (t == "inf" || t == "+inf" || t == "infinity") {
		return math.Inf(1), nil
	}
	x, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		if allowInf {
			return 0, badInput("--%s %q is not a number or inf", name, s)
		}
		return 0, badInput("--%s %q is not a finite number", name, s)
	}
	return x, nil
}

// channelFlags are the flags naming one channel and energy.
type channelFlags struct {
	channel, eta, lossDB, gain, noise, xi, energy string
}

func (c *channelFlags) register(fs *pflag.FlagSet, withEnergy bool) {
	fs.StringVar(&c.channel, "channel", "thermal-loss", "channel: thermal-loss, amplifier or additive")
	fs.StringVar(&c.eta, "eta", "", "transmissivity of thermal-loss, 0 < eta < 1")
	fs.StringVar(&c.lossDB, "loss-db", "", "loss in dB instead of --eta (eta = 10^(-dB/10))")
	fs.StringVar(&c.gain, "gain", "", "gain G > 1 of the amplifier")
	fs.StringVar(&c.noise, "noise", "0", "thermal photon number N_B of the environment (thermal-loss, amplifier)")
	fs.StringVar(&c.xi, "xi", "", "added noise xi > 0 of the additive channel (vacuum variance 1/2)")
	if withEnergy {
		fs.StringVar(&c.energy, "energy", "inf", "input mean photon number bound N_S, or inf")
	}
}

func (c *channelFlags) point(fs *pflag.FlagSet) (search.Point, error) {
	kind, err := gaussian.ParseKind(c.channel)
	if err != nil {
		return search.Point{}, badInput("--channel: %v", err)
	}
	m := gaussian.Model{Kind: kind}
	misplaced := func(names ...string) error {
		for _, n := range names {
			if fs.Changed(n) {
				return badInput("--%s does not apply to --channel %s", n, c.channel)
			}
		}
		return nil
	}
	switch kind {
	case gaussian.ThermalLoss:
		if err := misplaced("gain", "xi"); err != nil {
			return search.Point{}, err
		}
		switch {
		case c.eta != "" && c.lossDB != "":
			return search.Point{}, badInput("give --eta or --loss-db, not both")
		case c.eta != "":
			if m.Eta, err = parseNumber("eta", c.eta, false); err != nil {
				return search.Point{}, err
			}
		case c.lossDB != "":
			db, err := parseNumber("loss-db", c.lossDB, false)
			if err != nil {
				return search.Point{}, err
			}
			if db <= 0 {
				return search.Point{}, badInput("--loss-db %v is out of range (want > 0)", db)
			}
			m.Eta = math.Pow(10, -db/10)
		default:
			return search.Point{}, badInput("--channel thermal-loss needs --eta or --loss-db")
		}
		if m.NB, err = parseNumber("noise", c.noise, false); err != nil {
			return search.Point{}, err
		}
	case gaussian.Amplifier:
		if err := misplaced("eta", "loss-db", "xi"); err != nil {
			return search.Point{}, err
		}
		if c.gain == "" {
			return search.Point{}, badInput("--channel amplifier needs --gain")
		}
		if m.Gain, err = parseNumber("gain", c.gain, false); err != nil {
			return search.Point{}, err
		}
		if m.NB, err = parseNumber("noise", c.noise, false); err != nil {
			return search.Point{}, err
		}
	case gaussian.AdditiveNoise:
		if err := misplaced("eta", "loss-db", "gain", "noise"); err != nil {
			return search.Point{}, err
		}
		if c.xi == "" {
			return search.Point{}, badInput("--channel additive needs --xi")
		}
		if m.Xi, err = parseNumber("xi", c.xi, false); err != nil {
			return search.Point{}, err
		}
	}
	if err := m.Validate(); err != nil {
		return search.Point{}, badInput("%v", err)
	}
	p := search.Point{Model: m, Energy: math.Inf(1)}
	if c.energy != "" {
		if p.Energy, err = parseNumber("energy", c.energy, true); err != nil {
			return p, err
		}
		if p.Energy <= 0 {
			return p, badInput("--energy %v is out of range (want N_S > 0, or inf)", p.Energy)
		}
	}
	return p, nil
}

// searchFlags are the settings of a point search.
type searchFlags struct {
	family, method      string
	ancillas, keep      int
	starts, evaluations int
	seed                uint64
}

func (s *searchFlags) register(fs *pflag.FlagSet) {
	fs.StringVar(&s.family, "family", "auto", "map family: auto, split, tms-split, covariant or general")
	fs.StringVar(&s.method, "method", "nelder-mead", "local optimiser: nelder-mead or bfgs")
	fs.IntVar(&s.ancillas, "ancillas", 0, "ancilla modes of the covariant/general families (0: 3 covariant, 2 general)")
	fs.IntVar(&s.keep, "keep", 0, "kept modes E' of the covariant/general families (0: 2)")
	fs.IntVar(&s.starts, "starts", 0, fmt.Sprintf("random starts added to the known ones (0: %d; -1: none)", search.DefaultRandomStarts))
	fs.IntVar(&s.evaluations, "evaluations", 0, "objective evaluations per local run (0: 6000)")
	fs.Uint64Var(&s.seed, "seed", 1, "seed of the random starts")
}

func (s *searchFlags) settings() (search.Settings, error) {
	st := search.Settings{Family: s.family, Method: s.method, Ancillas: s.ancillas, Keep: s.keep,
		RandomStarts: s.starts, MaxEvaluations: s.evaluations}
	if s.starts < -1 {
		return st, badInput("--starts %d is out of range (want -1 or more)", s.starts)
	}
	if s.evaluations < 0 {
		return st, badInput("--evaluations %d is out of range (want >= 0)", s.evaluations)
	}
	if err := st.Validate(); err != nil {
		return st, badInput("%v", err)
	}
	return st, nil
}
