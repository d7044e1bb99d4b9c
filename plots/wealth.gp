# Ending wealth of 1 invested over the horizon, by holding count: the
# median and the 5% and 95% quantiles across random portfolios, rebalanced
# (a shaded band and a solid line) and bought and held (dashed and dotted
# lines), so that the two stay apart in greyscale print.  The margins, the
# wealth axis and the key are set after this by holdcount.
set title "@TITLE@\n@SUBTITLE@"
set xlabel "holding count N (log scale; equal weights at the start)"
set ylabel "ending wealth of 1 invested (log scale)"
set logscale xy
set xrange [1:@XMAX@]
set xtics (@XTICS@)
set format y "%g"
set style line 11 linecolor rgb "#1b6f6a" linewidth 2.6 pointtype 7 pointsize 1.0             # rebalanced median
set style line 12 linecolor rgb "#b5541c" linewidth 2.2 dashtype 2 pointtype 5 pointsize 1.0  # bought and held, median
set style line 13 linecolor rgb "#b5541c" linewidth 2.0 dashtype 3                            # bought and held, 5% and 95%
set style line 14 linecolor rgb "#5a6470" linewidth 1.2 dashtype 4                            # reference line
