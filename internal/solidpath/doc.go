// Package solidpath works out the solidification path of a thermal-analysis
// cup from its cooling curves: the fraction solid fs(t) and fs(T), the
// latent heat the cup released, the fraction solid at each characteristic
// point, and for aluminium the dendrite coherency point. It is pure: slices
// of seconds and degrees Celsius in, results out.
//
// Every method compares the measured cooling rate T' = dT/dt with a zero
// curve Z, the rate the cup would cool at if it released no latent heat:
//
//	T' = Z + (L/c)·dfs/dt,  so  L = c·∫(T' − Z)dt  and  fs(t) = ∫₀ᵗ(T' − Z) / ∫(T' − Z).
//
// They differ in Z:
//
//   - Newtonian (one thermocouple): Newton's law of cooling through the
//     room temperature, fitted on the solid (else the liquid) stretch
//     (Upadhya, Stefanescu, Lieu and Yeager, AFS Trans. 97 (1989) 61;
//     memory). It assumes the cup has one temperature. Known bias: in sand
//     cups it reads L low (the gradient, and the cold wall's extra uptake
//     early in freezing, are not in its zero curve; 1–5 % on simulated sand
//     cups, up to 15 % with a chill shell or a short plateau), so its L is
//     reported as an apparent latent heat.
//   - Fourier (two thermocouples, centre and near the wall): Z = a·∇²T with
//     the Laplacian from the two readings for a parabolic radial field and
//     the thermal diffusivity a measured on the single-phase stretches
//     (Fraś, Kapturkiewicz, Burbielko and López, AFS Trans. 101 (1993) 505;
//     memory). Its fs is the centre's. Known bias: the parabola and the
//     radial-only heat flow; L within about ±10 % on simulated sand cups,
//     high where a chill shell holds the wall thermocouple, and where that
//     shell recalesces before the centre's eutectic the fs up to the
//     eutectic reads low, which the method's parabola check
//     (Zero.Inflow > MaxInflow: the wall reading above the centre while
//     the cup freezes) flags; where the cup
//     freezes from the wall inward with a liquid pool at the centre (a pure
//     metal) the method does not apply.
//   - Dendrite coherency (aluminium, two thermocouples): the minimum of
//     T_w − T_c during the primary freezing (Bäckerud, Chai and Tamminen,
//     Solidification Characteristics of Aluminum Alloys, 1990; memory).
//
// The methods, their assumptions and their measured accuracy on simulated
// and real cups are described in docs/solidification.md; their sources are
// in docs/sources.md §5.
package solidpath
