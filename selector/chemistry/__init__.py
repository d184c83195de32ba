"""The model: pure numpy functions of the catalog's arrays (no I/O, no Pyomo).

water (Kw, density, permittivity, Debye–Hückel A) → activity (γ models) → thermo (pKa(T),
apparent pKa') → arrays (catalog as padded arrays) → speciation (the solver) →
equilibrium (reagent amounts → solved solutions) → properties (β, dpH/dT, dilution,
titration) and linear (fixed-pH coefficients for the optimiser).
"""
