// Package membrane predicts the steady membrane potential of a cell when a
// ligand-gated conductance opens: Nernst and Goldman–Hodgkin–Katz reversal
// potentials, the conductance-weighted (chord-conductance) equation, and an
// optional voltage-dependent Mg²⁺ block for NMDA-type channels.
//
// Units: potentials in mV, concentrations in mM, conductances in nS (single
// channels in pS), temperatures in °C. Every result is a steady-state model
// estimate with no pumps, no cable properties and no other channels than
// those entered.
package membrane
