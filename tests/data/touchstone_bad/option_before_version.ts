# Hz S RI R 50
[Version] 2.0
[Number of Ports] 2
