package recipe

// SplitNumber splits text such as "12.5e-3 Torr" into the leading number
// ("12.5e-3") and the rest (" Torr"), the way Parse reads quantities; num
// is "" when the text does not start with a number.
func SplitNumber(s string) (num, rest string) { return splitNumber(s) }
