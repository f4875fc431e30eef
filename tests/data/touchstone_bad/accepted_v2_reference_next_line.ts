! invented data: [Reference] values on the next line, a record over two lines (accepted)
[version] 2.0
# GHz Z DB R 50
[number of ports] 2
[two-port data order] 21_12
[number of frequencies] 2
[reference]
50 75
[network data]
1 34 10 20 -100
   6 170 33 -15
2 33 20 19 -110 5 160 32 -25
[end]
! after [End]: comments only
