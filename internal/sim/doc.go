// Package sim is a physics model of a thermal-analysis cup and of a melt deck
// that pours them. It is used for the demo, as known truth for the analysis
// core's regression tests and behind the virtual serial device. Everything it
// produces is SIMULATED and says so in its metadata.
//
// # The cup
//
// The cup is two lumped bodies (field notes §6, standard, extended): a core
// around the thermocouple (30 % of the metal) and a shell next to the cup
// wall. The shell loses heat to the wall,
//
//	m_s·c·dT_s/dt = −h(t)·A·(T_s − T∞) − ε·σ·A_top·(T_s⁴ − T∞⁴) + K·(T_c − T_s) + m_s·L·dfs_s/dt
//	m_c·c·dT_c/dt = −K·(T_c − T_s) + m_c·L·dfs_c/dt
//
// with A the cup's surface, A_top its open top (the only surface that
// radiates freely), T in kelvin inside the T⁴ term and
// σ = 5.670374419×10⁻⁸ W m⁻² K⁻⁴ (CODATA 2018). The cup is a cylinder as
// high as it is wide. h(t) = h·(1 + exp(−t/25 s)) after the pour: the cold
// sand wall soaks up heat at first (derived; treat as fitted). K is the
// core–shell conductance, convective while liquid and conductive through
// the solid, so the centre freezes last and then falls toward the shell:
// the end-of-freezing dip of dT/dt a real cup shows. Nuclei are shared by
// both lumps (convection carries them through the liquid).
//
// The solid fraction fs has two parts. The primary phase (austenite in
// hypoeutectic iron, α-Al in Al-Si) forms on the liquidus: grain envelopes
// nucleate below TL − ΔT₀ with the Oldfield law and grow at u = μ·ΔT²; the
// solid inside the envelopes follows the lever rule (iron: carbon diffuses
// fast in austenite) or the Scheil equation (Al-Si: silicon does not) on the
// liquidus line (Rappaz–Thévoz-type internal fraction, Metall. Trans. A 20
// (1989) 311) (memory). The eutectic nucleates in the remaining liquid with
// the Oldfield law N = A·ΔT^n (Trans. ASM 59 (1966) 945) (memory), the count
// fixed by the largest undercooling reached, and grows at u = μ·ΔT². Its
// impingement is JMAK, f = 1 − exp(−(4π/3)·M₃), with the moments
// M_k = Σ N_i R_i^k obeying dM₃/dt = 3u·M₂, dM₂/dt = 2u·M₁, dM₁/dt = u·M₀ and
// M₀ jumping with each birth (field notes §6). Recalescence then comes out of
// the latent heat by itself; nothing in the model places it.
//
//	fs = fp + (1 − fp)·fe   (in each lump)
//
// The thermocouple sees the core metal through a first-order lag
// dTc/dt = w(t)·(T − Tc)/τ, with the wetting w(t) rising from 0 to 1 while the
// cup fills (the junction starts at room temperature).
//
// The logger adds white noise, single-sample spikes, mains pickup (a sine at
// the mains frequency, sampled at the logger rate, so it aliases) and
// quantisation. Params documents every constant and its source.
//
// # Truth
//
// Truth reads every characteristic point off the noiseless logger view (the
// lagged thermocouple, without noise) at the integration step, with the
// definitions of design.md, and not through the analysis core.
package sim
