package main

import (
	flag "github.com/spf13/pflag"

	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/shot"
)

func init() {
	commands = append(commands, &command{name: "design", usage: "[flags]", flags: designCommand})
}

func designCommand(fs *flag.FlagSet) func([]string, *env) int {
	stages := fs.Int("stages", 0, "the generator's stage count (`N`)")
	stageC := fs.String("stage-capacitance", "", "each stage's capacitance, e.g. 0.3uF (`CAPACITANCE`)")
	c1 := fs.String("capacitance", "", "or the generator's capacitance C1 as a whole, e.g. 25nF (`CAPACITANCE`)")
	c2 := fs.String("load", "", "the load C2: test object, divider and strays, e.g. 400pF (`CAPACITANCE`)")
	side := fs.String("tail-resistor", "generator_side", "where the tail resistor is: generator_side or load_side (`SIDE`)")
	nominal := fs.String("nominal", "1.2/50", "the shape, front/tail in us: 1.2/50, or 250/2500 for switching (`SHAPE`)")
	factor := fs.Float64("front-factor", 1.67, "T1 = FACTOR (t90 - t30): IEC 60060-1's 1.67, or 1.6667 for 1/0.6 (`FACTOR`)")
	return func(args []string, e *env) int {
		g, t, err := shot.ParseDesign(*stages, *stageC, *c1, *c2, *side, *nominal, *factor)
		if len(args) > 0 {
			return e.usage("design", "takes flags only, not %q", args[0])
		} else if err != nil {
			return e.usage("design", "%v", err)
		}
		if err := report.Design(e.stdout, g, t); err != nil {
			return e.fail("design", err)
		}
		return exitOK
	}
}
