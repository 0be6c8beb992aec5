// Package tui is scalewalk's interactive explorer: a full-screen terminal
// UI in which a physicist steps RG flows by hand on a two-dimensional slice
// of coupling space, sees flow lines, fixed points and phase boundaries,
// reads a fixed point's eigenvalues and exponents, and changes the scenario
// and its parameters live.
//
// The terminal code does no physics: every number comes from package flow
// (trajectories, fixed points, phases) through commands that run off the
// update loop; the canvas renders plain data (lines, points, axes).
package tui
