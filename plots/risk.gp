# Risk by holding count: the exact curve, random portfolios, the floor and
# each rule's count.
set title "@TITLE@\n@BASIS@"
set xlabel "holding count N (equal weights; random portfolios drawn without replacement)"
set ylabel "portfolio standard deviation (% a year)"
set xrange [0:@XMAX@]
set yrange [0:*]
set format y "%.0f%%"
floor = @FLOOR@
