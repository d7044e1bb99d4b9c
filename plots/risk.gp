# Risk by holding count: the exact curve, random portfolios, the floor and
# each rule's count.  The margins, the y range and the key's place are set
# after this by holdcount, which lays out the rule labels.
set title "@TITLE@\n@SUBTITLE@"
set xlabel "holding count N (equal weights; random portfolios drawn without replacement)"
set ylabel "portfolio standard deviation (% a year)"
set xrange [0:@XMAX@]
set format y "%g%%"
floor = @FLOOR@
