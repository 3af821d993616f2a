from sinkopt.cli import main

raise SystemExit(main())
