// Package sim is a physics model of a thermal-analysis cup and of a melt deck
// that pours them. It is used for the demo, as known truth for the analysis
// core's regression tests and behind the virtual serial device. Everything it
// produces is SIMULATED and says so in its metadata. docs/simulator.md is
// the user's reference (parameters, truth keys, figures).
//
// # The lumped cup (Params.Cup = CupLumped, the default)
//
// The cup is two lumped bodies (the standard lumped cup,
// ρcV·dT/dt = −h·A·(T − T∞) + ρVL·dfs/dt, extended to two lumps): a core
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
// # The radial cup (Params.Cup = CupRadial)
//
// The same cylinder cut into N ≥ 5 annular zones of equal thickness
// (Radial.Zones, 8 by default), each at one temperature over the height
// (axially well mixed), with heat conduction between neighbours through
// cylindrical shells (effective conductivity k = k_s + (k_l − k_s)·(1 − fs)²
// of each zone, Radial.LiquidK and SolidK). The side wall takes
// h_wall(1 + w)·A_side·(T − T∞) from the wall zone (Radial.WallHW); the
// bottom and the open top take h(1 + w)·2a·(T − T∞) and ε·σ·a·(T⁴ − T∞⁴)
// from every zone in proportion to its face area a, so that with every zone
// at one temperature and h_wall = h the cup loses what the lumped cup loses.
// Each zone has the kinetics below at its own undercooling, and its own
// nuclei: a zone's count is fixed by the largest undercooling it reached
// itself, so the wall freezes first and the centre undercools and
// recalesces on its own (a pure metal's solid instead grows from the wall
// as a front: a zone takes its outer neighbour's grains once that has begun
// to freeze). A potent cup wall (Radial.WallNuclei, ShellFrac) nucleates
// the eutectic of a chill shell first; a poorly nucleating melt inside then
// waits above its own eutectic, and once the shell has frozen it cools
// again: the centre thermocouple sees a shoulder in dT/dt, a local maximum
// below zero, tens of seconds before its own eutectic recalescence.
// StrongGradient and NearlyLumped give the two ends. The thermocouple sits
// in the centre zone; a second one sits in the zone that holds 0.8·R
// (Output.Wall, Truth.WallTCRadiusMm), both through the same lag.
//
// # Kinetics
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
// M₀ jumping with each birth. Recalescence then comes out of the latent
// heat by itself; nothing in the model places it.
//
//	fs = fp + (1 − fp)·fe   (in each lump or zone)
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
// lagged centre thermocouple, without noise) at the integration step, with
// the definitions of docs/analysis.md, and not through the analysis core.
// The search for the liquidus and the eutectic begins at the first primary
// and eutectic nucleus: of either lump in the lumped cup, of the centre zone
// in the radial cup (the wall's arrests, which the centre sees as shoulders,
// are not its own).
package sim
