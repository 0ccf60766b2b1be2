// Package query is the --where language of `foilrun runs`: a small
// expression language over a run's columns, its derived recipe parameters
// and its outcome metrics, compiled to parameterised SQL.
//
//	growth_temperature_c >= 1000 and coverage > 0.9 or status = "done"
//	not (furnace = "tube-1") and (ch4_h2_ratio < 0.5 or layers = 1)
//
// Grammar (keywords are case-insensitive; "and" binds tighter than "or"):
//
//	expr       = term { "or" term }
//	term       = factor { "and" factor }
//	factor     = "not" factor | "(" expr ")" | comparison
//	comparison = name op value
//	op         = "=" | "!=" | "<" | "<=" | ">" | ">="
//	value      = number | "double-quoted" | 'single-quoted'
//
// A name is a run column, a recipe parameter (in the unit its name
// carries, e.g. growth_temperature_c in °C) or an outcome metric (in its
// canonical unit, e.g. coverage as a fraction; the mean of a run's
// measurements). A comparison on a parameter or metric is false for a run
// that lacks it. Names are checked against the Schema; the SQL holds only
// fixed text, every value and every parameter or metric name is a bound
// argument. Errors give the column of the offending token.
//
// Entry points: Parse, Compile, CompileAll.
package query
