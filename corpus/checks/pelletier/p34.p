% problem: Pelletier 34, Andrews' challenge
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(pel34_goal, conjecture,
    ((? [X] : ! [Y] : (p(X) <=> p(Y))) <=> ((? [X] : q(X)) <=> (! [Y] : q(Y)))) <=> ((? [X] : ! [Y] : (q(X) <=> q(Y))) <=> ((? [X] : p(X)) <=> (! [Y] : p(Y))))).
