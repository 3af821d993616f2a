from sinkopt.cli.main import main

raise SystemExit(main())
