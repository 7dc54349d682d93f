package promapi

import (
	"bytes"
	_ "embed"
	"errors"
	"fmt"
	"io"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
	"go.yaml.in/yaml/v3"
)

// MetricMap maps one Prometheus metric to one canonical quantity.
type MetricMap struct {
	// Column names the quantity as a CSV header would, unit included ("rx_power_mw" converts
	// mW to dBm); see docs/formats.md.
	Column string `yaml:"column"`
	// Metric is the metric name.
	Metric string `yaml:"metric"`
	// PortLabel is the label whose value names the port.
	PortLabel string `yaml:"port_label"`
	// Labels are further label="value" matchers a series must carry.
	Labels map[string]string `yaml:"labels,omitempty"`

	spec parse.ColumnSpec
	line int
}

// Mapping says which metrics hold which quantities. The built-in one (DefaultMapping) follows
// the OpenConfig path names; a YAML file of the same shape replaces it.
type Mapping struct {
	File    string      `yaml:"-"`
	Metrics []MetricMap `yaml:"metrics"`
}

//go:embed mapping.yaml
var defaultMappingYAML []byte

// DefaultMapping is the built-in mapping (mapping.yaml in this package).
func DefaultMapping() Mapping {
	m, err := ParseMapping("built-in mapping", defaultMappingYAML)
	if err != nil {
		panic("promapi: built-in mapping: " + err.Error())
	}
	return m
}

// LoadMapping reads a mapping file (bounded as every configuration file is: rules.ReadConfig).
func LoadMapping(file string) (Mapping, error) {
	data, err := rules.ReadConfig(file)
	if err != nil {
		return Mapping{}, err
	}
	return ParseMapping(file, data)
}

var (
	metricNameRE = regexp.MustCompile(`^[a-zA-Z_:][a-zA-Z0-9_:]*$`)
	labelNameRE  = regexp.MustCompile(`^[a-zA-Z_][a-zA-Z0-9_]*$`)
)

// ParseMapping reads a mapping from YAML; errors name the file and line.
func ParseMapping(file string, data []byte) (Mapping, error) {
	var raw struct {
		Metrics []yaml.Node `yaml:"metrics"`
	}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	dec.KnownFields(true)
	if err := dec.Decode(&raw); err != nil {
		if errors.Is(err, io.EOF) {
			return Mapping{}, fmt.Errorf("%s: empty mapping: list the metrics under metrics:", file)
		}
		return Mapping{}, fmt.Errorf("%s: %v", file, err)
	}
	m := Mapping{File: file}
	if len(raw.Metrics) == 0 {
		return m, fmt.Errorf("%s: no metrics: list them under metrics:", file)
	}
	for i := range raw.Metrics {
		n := &raw.Metrics[i]
		var mm MetricMap
		bad := func(format string, a ...any) error {
			return fmt.Errorf("%s:%d: metrics[%d]: %s", file, n.Line, i, fmt.Sprintf(format, a...))
		}
		if err := decodeKnown(n, &mm); err != nil {
			return m, bad("%v", err)
		}
		mm.line = n.Line
		spec, ok := parse.LookupColumnSpec(mm.Column)
		if !ok {
			return m, bad("column %q is not a measured quantity (see docs/formats.md for the names)", mm.Column)
		}
		mm.spec = spec
		if !metricNameRE.MatchString(mm.Metric) {
			return m, bad("metric %q is not a Prometheus metric name", mm.Metric)
		}
		if !labelNameRE.MatchString(mm.PortLabel) {
			return m, bad("port_label %q is not a Prometheus label name", mm.PortLabel)
		}
		for k := range mm.Labels {
			if !labelNameRE.MatchString(k) || k == mm.PortLabel {
				return m, bad("labels: %q is not a label name other than the port_label", k)
			}
		}
		m.Metrics = append(m.Metrics, mm)
	}
	return m, nil
}

// decodeKnown decodes n into out, refusing keys out does not have.
func decodeKnown(n *yaml.Node, out *MetricMap) error {
	b, err := yaml.Marshal(n)
	if err != nil {
		return err
	}
	dec := yaml.NewDecoder(bytes.NewReader(b))
	dec.KnownFields(true)
	return dec.Decode(out)
}

// selector is the PromQL selector of mm's series for the ports given (all ports when nil).
func (mm *MetricMap) selector(ports []string) string {
	var b bytes.Buffer
	b.WriteString(mm.Metric)
	b.WriteByte('{')
	keys := make([]string, 0, len(mm.Labels))
	for k := range mm.Labels {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		fmt.Fprintf(&b, "%s=%s,", k, strconv.Quote(mm.Labels[k]))
	}
	if ports == nil {
		fmt.Fprintf(&b, `%s!=""`, mm.PortLabel)
	} else {
		alts := make([]string, len(ports))
		for i, p := range ports {
			alts[i] = regexp.QuoteMeta(p)
		}
		fmt.Fprintf(&b, "%s=~%s", mm.PortLabel, strconv.Quote(strings.Join(alts, "|")))
	}
	b.WriteByte('}')
	return b.String()
}
