# Expected tracking error of a random equal-weight portfolio against the
# equal-weight portfolio of the whole universe, with the budget.  Both axes
# are log-scaled, so the few percent where a budget is set get room; the
# y range and ticks are set after this by holdcount.
set title "@TITLE@\n@SUBTITLE@"
set xlabel "holding count N (log scale; equal weights)"
set ylabel "tracking error (% a year, log scale)"
set logscale xy
set xrange [1:@XMAX@]
set xtics (@XTICS@)
# the curve, the budget and the rule's mark run along the bottom right
set key top right
budget = @BUDGET@
