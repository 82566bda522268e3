// Command hvshot evaluates high-voltage impulse captures: IEC 60060-1 parameters of
// divider channels, current from B-dot coils, field from E-field antennas, per shot
// and per series, with tables, plots and a report. It is a thin shell over the
// packages readers, waveform/shot and waveform/report.
package main

import (
	"embed"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"regexp"
	"strings"
	"syscall"

	flag "github.com/spf13/pflag"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/shot"
)

// Version is the tool's version, shown in reports.
var Version = "0.2.0"

// Exit statuses, documented in the help and the README.
const (
	exitOK          = 0
	exitOutOfTol    = 1
	exitFileErrors  = 2
	exitTestFailed  = 3
	exitUsage       = 64
	exitInterrupted = 130
)

const exitText = `exit status: 0 all shots evaluated and within tolerance, 1 some shot out of tolerance
or incomplete, 2 some file could not be read or evaluated, 3 the withstand test the
setup describes failed (before 1 and 2), 64 usage error, 130 interrupted (what was
done is written).`

// command is a subcommand: its flags and what it does with the arguments; its help
// text is help/NAME.txt.
type command struct {
	name, usage string
	flags       func(fs *flag.FlagSet) func(args []string, e *env) int
}

//go:embed help
var helpFiles embed.FS

func (c *command) about() string { return helpText(c.name) }

func usage() string { return helpText("hvshot") }

func helpText(name string) string {
	b, _ := helpFiles.ReadFile("help/" + name + ".txt")
	return strings.ReplaceAll(string(b), "{{exit}}", exitText)
}

// env is what a command reads and writes besides its flags.
type env struct {
	stdin          io.Reader
	stdout, stderr io.Writer
	command        []string // as typed, for the report's record of how it was made
}

var commands []*command

func main() {
	// A reader that stops early (| head) must not kill the run before its files are
	// written: writes to a closed pipe then fail, and are not waited on.
	signal.Ignore(syscall.SIGPIPE)
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	e := &env{stdin: stdin, stdout: stdout, stderr: stderr}
	if len(args) == 0 {
		fmt.Fprint(stderr, usage())
		return exitUsage
	}
	switch args[0] {
	case "version", "--version":
		fmt.Fprintln(stdout, "hvshot", Version)
		return exitOK
	case "help", "-h", "--help":
		if len(args) > 1 {
			if c := find(args[1]); c != nil {
				return c.run([]string{"--help"}, e)
			}
			fmt.Fprintf(stderr, "hvshot: no command %q; 'hvshot help' lists them\n", args[1])
			return exitUsage
		}
		fmt.Fprint(stdout, usage())
		return exitOK
	}
	if c := find(args[0]); c != nil {
		return c.run(args[1:], e)
	}
	fmt.Fprintf(stderr, "hvshot: unknown command %q\nRun 'hvshot help' for the commands.\n", args[0])
	return exitUsage
}

func find(name string) *command {
	if name == "analyse" {
		name = "analyze"
	}
	for _, c := range commands {
		if c.name == name {
			return c
		}
	}
	return nil
}

var reInvalid = regexp.MustCompile(`^invalid argument "(.*)" for "(?:-\w, )?--([\w-]+)" flag: (.*)$`)

// run parses the flags, answers --help on stdout, and reports a flag error in one line
// that names the flag, with a pointer to the help.
func (c *command) run(args []string, e *env) int {
	fs := flag.NewFlagSet(c.name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	fs.SortFlags = false
	do := c.flags(fs)
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			fmt.Fprintf(e.stdout, "usage: hvshot %s %s\n%s\nflags:\n%s", c.name, c.usage, c.about(), flagHelp(fs))
			return exitOK
		}
		msg := err.Error()
		if m := reInvalid.FindStringSubmatch(msg); m != nil {
			kind := "a valid value"
			if f := fs.Lookup(m[2]); f != nil {
				kind = map[string]string{"int": "a whole number", "duration": "a duration such as 500ms", "float64": "a number"}[f.Value.Type()]
			}
			msg = fmt.Sprintf("--%s: %q is not %s", m[2], m[1], kind)
		} else if name, ok := strings.CutPrefix(msg, "unknown flag: --"); ok {
			var names []string
			fs.VisitAll(func(f *flag.Flag) { names = append(names, f.Name) })
			if near := shot.Nearest(name, names); near != "" {
				msg += fmt.Sprintf(" (did you mean --%s?)", near)
			}
		}
		return e.usage(c.name, "%s", msg)
	}
	e.command = append([]string{"hvshot", c.name}, args...)
	return do(fs.Args(), e)
}

// usage reports a usage error in one line, with a pointer to the help.
func (e *env) usage(cmd, format string, a ...any) int {
	fmt.Fprintf(e.stderr, "hvshot %s: %s\nRun 'hvshot %s --help' for the flags.\n", cmd, fmt.Sprintf(format, a...), cmd)
	return exitUsage
}

// fail reports an error that is not a usage error.
func (e *env) fail(cmd string, err error) int {
	fmt.Fprintf(e.stderr, "hvshot %s: %v\n", cmd, err)
	return exitFileErrors
}

// flagHelp lists the flags in words: a value's name from the backquoted word of its
// usage, never a Go type.
func flagHelp(fs *flag.FlagSet) string {
	var b strings.Builder
	fs.VisitAll(func(f *flag.Flag) {
		name, usage := flag.UnquoteUsage(f)
		usage = strings.TrimSuffix(usage, " ("+name+")") // a value's name given only for the left column
		if f.Value.Type() == "bool" {
			name = ""
		} else if !strings.Contains(f.Usage, "`") {
			name = "VALUE"
		}
		left := "  --" + f.Name + " " + name
		if f.Shorthand != "" {
			left = "  -" + f.Shorthand + ", --" + f.Name + " " + name
		}
		if d := f.DefValue; d != "" && d != "false" && d != "[]" && d != "0" {
			usage += " (default " + d + ")"
		}
		fmt.Fprintf(&b, "%-30s %s\n", left, usage)
	})
	return b.String()
}

// quantity reads a flag's value with its unit (see readers.ParseQuantityIn).
func quantity(flagName, s, unit string) (float64, error) {
	v, err := readers.ParseQuantityIn(s, unit)
	if err != nil {
		return 0, fmt.Errorf("--%s: %v", flagName, err)
	}
	return v, nil
}

// readFlags are the reading options every command that reads captures shares.
type readFlags struct {
	interval, timeColumn, rawSample string
	rawChans                        int
	rawGain                         []float64
	rawBig                          bool
}

func (r *readFlags) add(fs *flag.FlagSet) {
	fs.StringVar(&r.interval, "interval", "", "sample interval, e.g. 2ns: for files that state none, and in place of what a file states, with a warning (`TIME`)")
	fs.StringVar(&r.timeColumn, "time-column", "auto", "whether the first column is time: auto, first or none (`WHICH`)")
	fs.StringVar(&r.rawSample, "raw-sample", "", "read files as raw binary of this sample `TYPE` (int16, float32, ...) when no .hvraw sidecar describes them")
	fs.IntVar(&r.rawChans, "raw-channels", 1, "interleaved channels in raw binary (`N`)")
	fs.Float64SliceVar(&r.rawGain, "raw-gain", nil, "raw binary: volts per code, one per channel or one for all (`G,...`)")
	fs.BoolVar(&r.rawBig, "raw-big-endian", false, "raw binary is big-endian")
}

func (r *readFlags) options() (readers.Options, error) {
	opt := readers.Options{TimeColumn: r.timeColumn}
	switch r.timeColumn {
	case "auto", "first", "none":
	default:
		return opt, fmt.Errorf("--time-column: auto, first or none, not %q", r.timeColumn)
	}
	if r.interval != "" {
		v, err := quantity("interval", r.interval, "s")
		if err != nil {
			return opt, err
		}
		if !(v > 0) {
			return opt, fmt.Errorf("--interval: must be positive, not %q", r.interval)
		}
		opt.Interval_s = v
	}
	if r.rawSample != "" {
		if opt.Interval_s == 0 {
			return opt, fmt.Errorf("--raw-sample needs --interval")
		}
		opt.Raw = &readers.RawSpec{Sample: r.rawSample, Channels: r.rawChans, Gain: r.rawGain, BigEndian: r.rawBig, Interval_s: opt.Interval_s}
	}
	return opt, nil
}
