# The share of a random portfolio's expected variance that is specific to
# its holdings: (vbar - cbar)/N over E[var(N)].  One line, so no key.
set title "@TITLE@\n@SUBTITLE@"
set xlabel "holding count N (log scale; equal weights)"
set ylabel "diversifiable share of expected variance (%)"
set logscale x
set xrange [1:@XMAX@]
set xtics (@XTICS@)
set yrange [0:100]
unset key
set format y "%.0f%%"
