# Expected tracking error of a random equal-weight portfolio against the
# equal-weight portfolio of the whole universe, with the budget.
set title "@TITLE@\n@BASIS@"
set xlabel "holding count N (log scale; equal weights)"
set ylabel "expected tracking error (% a year)"
set logscale x
set xrange [1:@XMAX@]
set xtics (@XTICS@)
set yrange [0:*]
# the curve, the budget and the rule's mark run along the bottom
set key top right
set format y "%.0f%%"
budget = @BUDGET@
