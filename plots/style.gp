# holdcount's plot style: a calm palette that prints well in grey.
set encoding utf8
set termoption noenhanced
set border 3 linewidth 1.2 linecolor rgb "#3d3d3d"
set tics nomirror out scale 0.6
set grid xtics ytics linecolor rgb "#e4e4e4" linewidth 1 dashtype 1
set key bottom right opaque box linecolor rgb "#bdbdbd" samplen 2.5 spacing 1.25 width 1
set bmargin 5
set style line 1 linecolor rgb "#1b6f6a" linewidth 2.6                          # exact curve
set style line 2 linecolor rgb "#b5541c" linewidth 1.4 pointtype 6 pointsize 1.2  # sampled mean
set style line 3 linecolor rgb "#ecdcae"                                         # 5-95% band
set style line 4 linecolor rgb "#5a6470" linewidth 1.6 dashtype 2                # floor, budget
set style line 5 linecolor rgb "#7b2d63" linewidth 1.2 dashtype 3 pointtype 9 pointsize 1.6  # rule counts
set style line 6 linecolor rgb "#2f4b8f" linewidth 1.4 pointtype 5 pointsize 1.3  # fund at its count
set style line 7 linecolor rgb "#a0640f" linewidth 1.6 pointtype 12 pointsize 2.4 # fund at its effective count
set style line 8 linecolor rgb "#5a6470" linewidth 1 dashtype 3                  # joins the two
set style line 9 linecolor rgb "#c0392b" linewidth 1.4 pointtype 11 pointsize 1.7 # a fund failing the policy
set style fill solid 1.0 noborder
