% problem: Pelletier 33
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(pel33_goal, conjecture,
    (! [X] : ((p(a) & (p(X) => p(b))) => p(c))) <=> (! [X] : ((~p(a) | p(X) | p(c)) & (~p(a) | ~p(b) | p(c))))).
