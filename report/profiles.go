package report

import (
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"text/tabwriter"

	"github.com/beatnote/beatnote/report/escape"
	"github.com/beatnote/beatnote/rules"
)

// This file holds the writers of the profiles command.

// WriteProfilesJSON writes the profiles as the JSON array of the design contract.
func WriteProfilesJSON(w io.Writer, profiles []rules.Profile) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(profiles)
}

// WriteProfilesText prints a table of the main figures, then each profile's figures with sources.
func WriteProfilesText(w io.Writer, profiles []rules.Profile) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "profile\tmodulation\tGBd\tFEC threshold BER\treq. OSNR dB\tCD ps/nm\tDGD ps\tPDL dB\tSOP krad/s\tLO ±MHz\tRx dBm\t")
	for _, p := range profiles {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s…%s\t\n", escape.Visible(p.ID), escape.Visible(p.Modulation),
			figNum(p.BaudGBd), strconv.FormatFloat(p.FECThresholdBER, 'g', 3, 64), figNum(p.RequiredOSNRdB),
			figNum(p.CDTolerancePsNm), figNum(p.DGDTolerancePs), figNum(p.PDLTolerancedB), figNum(p.SOPTrackingKradS),
			figNum(p.LOOffsetRangeMHz), figNum(p.RxPowerMinDBm), figNum(p.RxPowerMaxDBm))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	for _, p := range profiles {
		fmt.Fprintf(w, "\n%s — %s\n", escape.Visible(p.ID), escape.Visible(p.Name))
		if p.Description != "" {
			fmt.Fprintf(w, "  %s\n", escape.Visible(p.Description))
		}
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		for _, f := range profileFigureRows(p) {
			if f.value == "" {
				continue
			}
			fmt.Fprintf(tw, "  %s\t%s\t%s\n", f.label, escape.Visible(f.value), escape.Visible(p.Sources[f.key]))
		}
		if err := tw.Flush(); err != nil {
			return err
		}
	}
	return nil
}

type figureRow struct{ key, label, value string }

// profileFigureRows lists a profile's figures with their units, in reading order.
func profileFigureRows(p rules.Profile) []figureRow {
	opt := func(v float64, unit string) string {
		if v == 0 {
			return ""
		}
		return figNum(v) + unit
	}
	rows := []figureRow{
		{"modulation", "modulation", p.Modulation},
		{"polarizations", "polarizations", strconv.Itoa(p.Polarizations)},
		{"baud_gbd", "symbol rate", figNum(p.BaudGBd) + " GBd"},
		{"line_rate_gbps", "line rate", opt(p.LineRateGbps, " Gb/s")},
		{"fec", "FEC", p.FEC},
		{"fec_threshold_ber", "FEC threshold", "pre-FEC BER " + strconv.FormatFloat(p.FECThresholdBER, 'g', 4, 64)},
		{"required_osnr_db", "required OSNR", opt(p.RequiredOSNRdB, " dB (0.1 nm)")},
		{"implementation_penalty_db", "implementation penalty", opt(p.ImplementationPenaltyDB, " dB")},
		{"back_to_back_snr_db", "back-to-back SNR", opt(p.BackToBackSNRdB, " dB")},
		{"cd_tolerance_ps_nm", "CD tolerance", "±" + figNum(p.CDTolerancePsNm) + " ps/nm"},
		{"dgd_tolerance_ps", "DGD tolerance (instantaneous)", figNum(p.DGDTolerancePs) + " ps"},
		{"mean_dgd_tolerance_ps", "mean DGD", opt(p.MeanDGDTolerancePs, " ps")},
		{"pdl_tolerance_db", "PDL tolerance", figNum(p.PDLTolerancedB) + " dB"},
		{"sop_tracking_krad_s", "SOP tracking", figNum(p.SOPTrackingKradS) + " krad/s"},
		{"lo_offset_range_mhz", "LO offset capture", "±" + figNum(p.LOOffsetRangeMHz) + " MHz"},
		{"rx_power_min_dbm", "Rx power min", figNum(p.RxPowerMinDBm) + " dBm"},
		{"rx_power_max_dbm", "Rx power max", figNum(p.RxPowerMaxDBm) + " dBm"},
	}
	if p.TxPowerMinDBm != 0 || p.TxPowerMaxDBm != 0 {
		rows = append(rows,
			figureRow{"tx_power_min_dbm", "Tx power min", figNum(p.TxPowerMinDBm) + " dBm"},
			figureRow{"tx_power_max_dbm", "Tx power max", figNum(p.TxPowerMaxDBm) + " dBm"})
	}
	rows = append(rows,
		figureRow{"frequency_min_thz", "frequency min", opt(p.FrequencyMinTHz, " THz")},
		figureRow{"frequency_max_thz", "frequency max", opt(p.FrequencyMaxTHz, " THz")},
		figureRow{"hazard_level", "IEC 60825-2 hazard level", p.HazardLevel})
	return rows
}

// figNum formats a figure without trailing zeros.
func figNum(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
