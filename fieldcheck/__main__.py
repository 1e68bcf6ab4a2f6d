from fieldcheck.cli import main

raise SystemExit(main())
