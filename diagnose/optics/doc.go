// Package optics holds the physics models of a coherent optical link that beatnote judges
// telemetry against: BER ↔ Q-factor, pre-FEC BER as a function of SNR per symbol for the usual
// Gray-coded DP-QAM formats, SNR ↔ OSNR in the 0.1 nm (12.5 GHz) reference bandwidth, the
// ITU-T G.694.1 DWDM grid, fibre chromatic dispersion (ITU-T G.652 / G.654 / G.655 figures),
// polarization-mode dispersion and the Maxwellian DGD distribution, and the link budget with
// ASE noise and the GN-model nonlinear interference (Poggiolini 2012/2014).
//
// Every function states its formula, units, domain and source in its doc comment. Names carry
// their units (…DB, …DBm, …MW, …PsNm, …THz, …GHz, …Km). Results outside a function's domain are
// NaN, never a clamped or guessed number; range checks are written so that NaN fails them.
// Powers are handled in linear milliwatts internally; dB helpers convert at the edges.
package optics
