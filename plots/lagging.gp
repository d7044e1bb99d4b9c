# The chance that a random portfolio of N holdings ends the horizon behind
# the benchmark, rebalanced (solid, circles) and bought and held (dashed,
# squares).  The margins and the key are set after this by holdcount.
set title "@TITLE@\n@SUBTITLE@"
set xlabel "holding count N (log scale; equal weights at the start)"
set ylabel "portfolios behind the benchmark at the end (%)"
set logscale x
set xrange [1:@XMAX@]
set xtics (@XTICS@)
set ytics 0, 10, 100
set format y "%g"
set style line 11 linecolor rgb "#1b6f6a" linewidth 2.6 pointtype 7 pointsize 1.0             # rebalanced
set style line 12 linecolor rgb "#b5541c" linewidth 2.2 dashtype 2 pointtype 5 pointsize 1.0  # bought and held
set style line 14 linecolor rgb "#5a6470" linewidth 1.2 dashtype 4                            # half of the portfolios
