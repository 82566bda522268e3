package shot

import (
	"fmt"
	"path"
	"regexp"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// planned is a record's channel with its description.
type planned struct {
	ch    *waveform.Channel
	index int // 0-based position in the record
	setup ChannelSetup
	// named is the sensor role a channel's name suggests when nothing assigned it one:
	// it is reported, not judged as a divider.
	named Role
}

var rePosition = regexp.MustCompile(`^(?i)ch(\d+)$`)

// matches reports the channels a description picks: by name or pattern first; a
// description whose index is set, or whose match reads "CHn", falls back to that
// position for formats whose channels carry no such name.
func (s *ChannelSetup) matches(rec *waveform.Record) []int {
	var out []int
	if s.Match != "" {
		for i := range rec.Channels {
			if ok, _ := path.Match(s.Match, rec.Channels[i].Name); ok {
				out = append(out, i)
			}
		}
	}
	if len(out) > 0 {
		return out
	}
	k := s.Index
	if m := rePosition.FindStringSubmatch(s.Match); k == 0 && m != nil {
		k, _ = strconv.Atoi(m[1])
	}
	if k > 0 && k <= len(rec.Channels) {
		return []int{k - 1}
	}
	return nil
}

func (s *ChannelSetup) describe() string {
	switch {
	case s.Match != "" && s.Index > 0:
		return fmt.Sprintf("match %q or index %d", s.Match, s.Index)
	case s.Index > 0:
		return fmt.Sprintf("index %d", s.Index)
	}
	return fmt.Sprintf("match %q", s.Match)
}

func channelNames(rec *waveform.Record) string {
	names := make([]string, len(rec.Channels))
	for i, c := range rec.Channels {
		names[i] = c.Name
	}
	return strings.Join(names, ", ")
}

// nearChannel suggests the file's channel a mistyped match was likely meant for.
func nearChannel(match string, rec *waveform.Record) string {
	names := make([]string, len(rec.Channels))
	for i, c := range rec.Channels {
		names[i] = c.Name
	}
	if near := Nearest(match, names); near != "" && match != "" {
		return fmt.Sprintf(" (did you mean %q?)", near)
	}
	return ""
}

// sensorWords suggest a role from a channel's name (common practice in naming scope
// channels after their sensor; ours to choose which words count).
var sensorWords = []struct {
	role  Role
	words []string
}{
	{Coil, []string{"coil", "bdot", "b-dot", "dbdt", "db/dt", "didt", "di/dt", "rogowski"}},
	{Antenna, []string{"antenna", "efield", "e-field", "dedt", "de/dt", "whip"}},
}

// RoleFromName is the sensor role a channel's name suggests, or "".
func RoleFromName(name string) Role {
	n := strings.ToLower(name)
	for _, s := range sensorWords {
		for _, w := range s.words {
			if strings.Contains(n, w) {
				return s.role
			}
		}
	}
	return ""
}

// plan pairs the record's channels with their descriptions. With channel descriptions
// (a setup file), a required one missing from the file is an error. Without them, every
// channel is a divider channel unless a role from Roles picks it or its name says it is
// a sensor; a role that picks nothing is a warning for every row of the file.
func plan(rec *waveform.Record, cfg *Config) ([]planned, []Warning, error) {
	var out []planned
	if len(cfg.Channels) > 0 {
		for k := range cfg.Channels {
			s := cfg.Channels[k]
			idx := s.matches(rec)
			if len(idx) == 0 {
				if s.Optional {
					continue
				}
				return nil, nil, fmt.Errorf("setup channel %d (%s, %s) is not in the file, which has %s: correct its match%s, or mark it optional = true if some captures lack it", k+1, s.Role, s.describe(), channelNames(rec), nearChannel(s.Match, rec))
			}
			out = append(out, planned{ch: &rec.Channels[idx[0]], index: idx[0], setup: s})
		}
		return out, nil, nil
	}
	var warns []Warning
	assigned := make([]*ChannelSetup, len(rec.Channels))
	for k := range cfg.Roles {
		s := &cfg.Roles[k]
		idx := s.matches(rec)
		if len(idx) == 0 {
			warns = append(warns, Warning{"role-unmatched", fmt.Sprintf("role %s for %q matches no channel; the file's channels are %s%s", s.Role, s.Match, channelNames(rec), nearChannel(s.Match, rec))})
		}
		for _, i := range idx {
			assigned[i] = s
		}
	}
	for i := range rec.Channels {
		p := planned{ch: &rec.Channels[i], index: i, setup: ChannelSetup{Role: Divider}}
		switch {
		case assigned[i] != nil:
			p.setup = *assigned[i]
		case roleOfUnit(rec.Channels[i].Unit) != "":
			p.setup.Role = roleOfUnit(rec.Channels[i].Unit)
		case len(rec.Channels) > 1:
			p.named = RoleFromName(rec.Channels[i].Name)
		}
		out = append(out, p)
	}
	return out, warns, nil
}
