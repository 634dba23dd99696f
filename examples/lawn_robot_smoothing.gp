# Renders twenty minutes of the lawn robot demo's CSV: east position error of the fixes, the filter and the
# smoother, with the ±3σ bands of the filter and of the smoother.
# Usage: gnuplot -e "csv='lawn_robot_smoothing.csv'" -e "png='lawn_robot_smoothing.png'" lawn_robot_smoothing.gp
if (!exists("csv")) csv = 'lawn_robot_smoothing.csv'
if (!exists("png")) png = 'lawn_robot_smoothing.png'
set datafile separator ','
set terminal pngcairo size 1000,450 noenhanced
set output png
set title 'lawn robot log: filtered vs RTS-smoothed east position (minutes 60-80 of 480)'
set key top right opaque
set xlabel 'time (s)'
set ylabel 'east position error (m)'
set xrange [3600:4800]
set yrange [-3:3]
plot csv every ::1 using 1:($4-$2) with points pt 7 ps 0.3 lc rgb '#b0b0b0' title 'fix - truth', \
     '' every ::1 using 1:($6-$2) with lines lw 1 lc rgb '#1f77b4' title 'filtered - truth', \
     '' every ::1 using 1:(3*$8) with lines dt 2 lc rgb '#1f77b4' title 'filtered +-3 sigma', \
     '' every ::1 using 1:(-3*$8) with lines dt 2 lc rgb '#1f77b4' notitle, \
     '' every ::1 using 1:($9-$2) with lines lw 2 lc rgb '#d62728' title 'smoothed - truth', \
     '' every ::1 using 1:(3*$11) with lines dt 2 lc rgb '#d62728' title 'smoothed +-3 sigma', \
     '' every ::1 using 1:(-3*$11) with lines dt 2 lc rgb '#d62728' notitle
