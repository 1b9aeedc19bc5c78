"""Section 6: every formula the numbers rest on, with its published source.

:data:`FORMULAS` is the one table of them. The report prints it, and
``docs/formulas.md`` carries it verbatim between two markers, written by
:func:`formulas_markdown`; tests/test_report.py fails when the two drift apart.
"""

from __future__ import annotations

from .style import SECTION_TITLES
from .writer import Writer

#: (quantity, formula, published source) of every formula the numbers rest on.
FORMULAS: tuple[tuple[str, str, str], ...] = (
    (
        "Thermal noise of a resistor",
        "e = √(4kTR); k = 1.380649 × 10⁻²³ J/K (exact)",
        "J. B. Johnson, Phys. Rev. 32, 97 (1928); H. Nyquist, Phys. Rev. 32, 110 (1928); "
        "k from the SI (2019), CODATA 2018",
    ),
    (
        "Shot noise of a DC current",
        "i = √(2qI); q = 1.602176634 × 10⁻¹⁹ C (exact)",
        "W. Schottky, Ann. Phys. 57, 541 (1918)",
    ),
    (
        "1/f + white density and its integral",
        "e(f)² = e_w²(1 + f_c/f); v² = e_w²(f_c·ln(f_H/f_L) + f_H − f_L)",
        "C. D. Motchenbacher and J. A. Connelly, Low-Noise Electronic System Design, "
        "Wiley (1993), ch. 1",
    ),
    (
        "Current noise into a resistance",
        "e = i_n·R at each amplifier input",
        "Motchenbacher and Connelly, ch. 1–2",
    ),
    (
        "The front end solved as one circuit",
        "(G + sC)·x = b per frequency; all transfers to the ADC input from one adjoint solve "
        "(G + sC)ᵀ·y = e_out; σ_j² = ∫ S_j(f)·|H_j(f)|²·|H_d(f)|² df for each source j",
        "C.-W. Ho, A. E. Ruehli, P. A. Brennan, IEEE Trans. Circuits Syst. CAS-22, 504 (1975); "
        "R. Rohrer, L. Nagel, R. Meyer, L. Weber, IEEE J. Solid-State Circuits SC-6, 204 "
        "(1971); the noise-source method of Motchenbacher and Connelly, ch. 2",
    ),
    (
        "Non-inverting stage, referred to its input",
        "e² = e_n² + (i_n+·R_s)² + (i_n−·RF‖RG)² + 4kT·(RF‖RG)",
        "Motchenbacher and Connelly, ch. 2",
    ),
    (
        "Photodiode as a current source",
        "i² = 4kT/R_sh + 2q·I_dark + 2q·I_fs per hertz, I_fs the largest signal current; "
        "referred to the sensor in A",
        "W. Schottky, Ann. Phys. 57, 541 (1918) for the shot noise; Johnson (1928) and "
        "Nyquist (1928) for the shunt; Motchenbacher and Connelly, ch. 2",
    ),
    (
        "Transimpedance stage",
        "v_o = −I·Z_f, Z_f = R_f ∥ C_f; e_n sees NG = 1 + Z_f/Z_in, Z_in = R_sh ∥ (C_j + C_in): "
        "1 at DC, 1 + (C_j + C_in)/C_f above the zero, v_o/e_n = NG/(1 + NG·s/ω_t)",
        "J. G. Graeme, Photodiode Amplifiers: Op Amp Solutions, McGraw-Hill (1996) (from "
        "memory); the feedback relation A/(1 + Aβ), β = 1/NG, A = ω_t/s; the budget takes "
        "it from the nodal solve",
    ),
    (
        "Transimpedance loop gain and ringing",
        "refused when GBW/f_top < |NG(f_top)| or a loop pole pair has Q > 50; C_f for a 45° "
        "phase margin ≈ √((C_j + C_in)/(2π·R_f·GBW))",
        "Graeme (1996) (from memory); the Q limit is common practice, no source",
    ),
    (
        "Filter section from its component values",
        "Sallen-Key: ω₀² = 1/(R1R2C1C2), 1/(ω₀Q) = C2(R1 + R2) + R1C1(1 − K); multiple "
        "feedback: ω₀² = 1/(R2R3C1C2), 1/(ω₀Q) = C2(R2 + R3 + R2R3/R1), K = −R2/R1",
        "R. P. Sallen and E. L. Key, IRE Trans. Circuit Theory CT-2, 74 (1955); the "
        "multiple-feedback transfer derived by nodal analysis (resplan.noise.sections)",
    ),
    (
        "Integrated amplifier, referred to its input",
        "e² = e_in² + (e_out/G)² + (i_n·R_s)²",
        "Motchenbacher and Connelly, ch. 2 (two-stage model)",
    ),
    (
        "Noise of an RC filter",
        "v = √(kT/C), independent of R",
        "standard result; Motchenbacher and Connelly, ch. 1",
    ),
    (
        "Referring to the sensor; uncorrelated sources",
        "σ² = σ₁² + σ₂²/G₁² + σ₃²/(G₁G₂)² + …",
        "Motchenbacher and Connelly, ch. 2 (cascaded stages)",
    ),
    (
        "Equivalent noise bandwidth",
        "ENBW = ∫₀^∞ |H(f)|² df / |H(0)|²",
        "definition; Motchenbacher and Connelly, ch. 1",
    ),
    (
        "Butterworth ENBW",
        "ENBW = f_c·(π/2n)/sin(π/2n); RC: (π/2)·f_c",
        "closed form of ∫ df/(1 + (f/f_c)^2n), Gradshteyn and Ryzhik 3.241.2",
    ),
    (
        "Butterworth attenuation",
        "A(f) = 10·log10(1 + (f/f_c)^2n) dB",
        "S. Butterworth, \"On the Theory of Filter Amplifiers\", Experimental Wireless and the "
        "Wireless Engineer 7, 536–541 (1930)",
    ),
    (
        "Bessel low-pass",
        "H(s) = a₀/θ_n(s), θ_n the reverse Bessel polynomial",
        "W. E. Thomson, Proc. IEE 96, 487 (1949)",
    ),
    (
        "Sinc decimation filter",
        "|H(f)|² = [sin(πfR/f_s)/(R·sin(πf/f_s))]^2k",
        "E. B. Hogenauer, IEEE Trans. ASSP 29, 155 (1981)",
    ),
    (
        "ENBW of a digital filter",
        "∫₀^(f_s/2) |H|² df = (f_s/2)·Σ h[n]²",
        "Parseval's theorem: A. V. Oppenheim and R. W. Schafer, Discrete-Time Signal "
        "Processing, 3rd ed., §2.9",
    ),
    (
        "Noise of a sampled chain, aliases included",
        "σ² = ∫ S(f)·|H_a(f)|²·|H_d(f)|² df, |H_d| periodic in f_s (folded into 0…f_s/2)",
        "sampling theorem: C. E. Shannon, \"Communication in the Presence of Noise\", Proc. IRE "
        "37(1), 10–21 (1949); periodic "
        "digital response, Oppenheim and Schafer",
    ),
    (
        "Where an interferer aliases, and what is left of it",
        "f_alias = |f_i − m·f_s| in 0…f_s/2; residue = A_i·10^(−(A_analog + A_digital)/20)",
        "sampling theorem (as above); attenuation from the responses' closed forms",
    ),
    (
        "Mains pickup with a frequency tolerance",
        "each harmonic h·f_mains at its worst frequency in h·f_mains·(1 ± tol), never an exact "
        "sinc null; harmonics add in power; the worse of 50 Hz and 60 Hz counts",
        "worst case over the tolerance window; ±1 % is common practice, no source",
    ),
    (
        "Out-of-band spectrum left in the output",
        "σ² = ∫ S_i(f)·|H_a(f)|²·|H_d(f)|² df over the stated table, folded like noise",
        "as the noise of a sampled chain (above)",
    ),
    (
        "Pass-band droop",
        "droop = 20·log10(|H_a(f_top)|·|H_d(f_top)|) dB; sinc^k: k·20·log10|sin(πf_topR/f_s)"
        "/(R·sin(πf_top/f_s))|",
        "E. B. Hogenauer, IEEE Trans. ASSP 29, 155 (1981) for the sinc^k response",
    ),
    (
        "Settling and per-channel rate",
        "sinc^k: k output periods; average of N: N input periods; FIR of L taps: L input "
        "periods; stages add; per channel 1/(N_ch·max(t_settle, 1/ODR))",
        "impulse-response length of each filter (Hogenauer 1981 for sinc^k)",
    ),
    (
        "Aperture jitter",
        "σ = 2π·f·A_rms·σ_j at a full-span sine of the signal frequency; "
        "SNR_j = −20·log10(2π·f·σ_j)",
        "W. Kester (ed.), Data Conversion Handbook, Newnes (2005), ch. 2 (from memory); "
        "aperture jitter as defined in IEEE Std 1241-2010",
    ),
    (
        "Quantisation noise",
        "σ_q = q/√12, q = FSR/2^N",
        "W. R. Bennett, Bell Syst. Tech. J. 27, 446 (1948)",
    ),
    (
        "Ideal SNR; ENOB",
        "SNR = 6.02N + 1.76 dB; ENOB = (SINAD − 1.76)/6.02",
        "IEEE Std 1241-2010",
    ),
    (
        "Noise from a data-sheet SNR",
        "σ = (FSR/(2√2))·10^(−SNR/20)",
        "IEEE Std 1241-2010 (full-scale sine definition of SNR)",
    ),
    (
        "Oversampling; delta-sigma quantisation",
        "gain 10·log10(OSR) dB, OSR = f_s/(2f_B); SQNR = 6.02N + 1.76 − 10·log10(π^2L/(2L+1)) "
        "+ (2L+1)·10·log10(OSR)",
        "R. Schreier and G. C. Temes, Understanding Delta-Sigma Data Converters, "
        "IEEE Press/Wiley (2005), ch. 1 and 4",
    ),
    (
        "Reference noise",
        "error = V_in·σ_ref/V_ref, at the largest input; cancels when ratiometric",
        "follows from the converter's transfer function code = V_in/V_ref (standard result)",
    ),
    (
        "Coverage factor",
        "k_pp = 2√2·erf⁻¹(P): 6.58 at 99.9 %, 6.0 at 99.73 %",
        "Gaussian coverage, JCGM 100:2008 (GUM), annex G",
    ),
    (
        "Resolution figures",
        "effective bits = log2(S/σ); noise-free bits = log2(S/(k_pp·σ)); "
        "noise-free counts = S/(k_pp·σ)",
        "W. Kester (ed.), Data Conversion Handbook, Newnes (2005), ch. 5",
    ),
    (
        "Dynamic range",
        "DR = 20·log10((S/(2√2))/σ) dB",
        "IEEE Std 1241-2010 (full-scale sine)",
    ),
    (
        "Allowed noise",
        "σ_allowed = S/(counts·k_pp), less the interference allowance in power",
        "inverse of the noise-free count definition above",
    ),
)


def formulas_section(w: Writer) -> list:
    out = [w.heading(SECTION_TITLES[5], 0)]
    rows = [["Quantity", "Formula", "Source"]]
    rows += [list(row) for row in FORMULAS]
    out.append(w.table(rows, [38, 62, 70]))
    return out


#: The lines ``docs/formulas.md`` wraps the generated table in.
DOCS_MARKERS = ("<!-- formula table: start -->", "<!-- formula table: end -->")


def formulas_markdown() -> str:
    """The formula table as a Markdown table, markers included, for ``docs/formulas.md``."""

    def cell(text: str) -> str:
        return text.replace("|", "\\|")

    lines = [DOCS_MARKERS[0], "| quantity | formula | source |", "|---|---|---|"]
    lines += [f"| {cell(q)} | {cell(f)} | {cell(s)} |" for q, f, s in FORMULAS]
    lines.append(DOCS_MARKERS[1])
    return "\n".join(lines) + "\n"
