// Package recipe reads the three files a furnace user keeps (recipe,
// furnace and site), turns a recipe into a plan in time on a furnace, and
// checks the plan against the furnace's limits.
//
// All quantities are SI internally (K, Pa, mol/s, m, s, J, fractions).
// Units are parsed once, here, at the YAML boundary: Parse reads "1000 C",
// "500 mTorr" or "35 sccm" into a Quantity that keeps the SI value and the
// text as written; Format and In write an SI value back in a unit. No
// package past recipe reads a unit string by any other means.
//
// Entry points:
//
//   - LoadRecipe, LoadFurnace, LoadSite (and the Parse* forms for bytes)
//     decode a file strictly, report every problem with line and column,
//     then fill the defaults a file may leave out;
//   - Resolve finds the furnace and site a recipe names;
//   - Derive builds the Plan: per-step durations, pressures, mole
//     fractions, partial pressures, flows at temperature, residence time,
//     Reynolds and Knudsen numbers, methane supersaturation, copper loss;
//   - Check returns the findings of the limit and sequence checks;
//   - Plan.Parameters gives the derived numbers a run log indexes.
package recipe
