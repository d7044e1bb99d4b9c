# Expected shortfall 95% by holding count: the mean over random equal-weight
# portfolios, the band holding the middle 90% of them, and the equal-weight
# universe's own value.  The margins, the y range and the key are set after
# this by holdcount.
set title "@TITLE@\n@SUBTITLE@"
set xlabel "holding count N (log scale; equal weights, rebalanced every @PERIOD@)"
set ylabel "expected shortfall 95% (% lost in one @PERIOD@)"
set logscale x
set xrange [1:@XMAX@]
set xtics (@XTICS@)
set format y "%g%%"
universe_es = @UNIVERSE_ES@
set style line 11 linecolor rgb "#1b6f6a" linewidth 2.6 pointtype 7 pointsize 1.0  # mean of random portfolios
