import { makeScenario } from '/work/main/test/helpers.ts';
import { prepareSetup } from '/work/main/sim/experiment.ts';
import { runReplication } from '/work/main/sim/engine.ts';
const layout = ['##########','#HPD##DPH#','#........#','#####.####','##########'].join('\n');
const cell = (x:number,y:number)=>y*10+x;
for (const [policy, rec] of [['greedy-reactive',0],['greedy-reactive',undefined],['token-passing',undefined]] as const) {
  const sc = makeScenario({layout, robots:2, policy, pickupSeconds:2, dropSeconds:2, hours:1, recoverySeconds: rec,
    demand:{kind:'trace',mode:'delivery',tracePath:'inline',tasks:[{releaseSeconds:0,pickup:cell(2,1),drop:cell(6,1)},{releaseSeconds:0,pickup:cell(7,1),drop:cell(3,1)}]}});
  const r = runReplication(prepareSetup(sc), 0, { afterMotion:(t,w)=>{ if (t<15 || (t>420&&t<440)) console.log(t, Array.from(w.robotCell, c=>`${c%10}:${Math.floor(c/10)}`).join(' '), Array.from(w.robotPhase).join(','));} });
  console.log(policy, rec, 'delivered', r.delivered, 'coll', r.collisions, 'episodes', r.metrics.episodes.length, JSON.stringify(r.metrics.episodes.slice(0,3)), r.policyCounters);
}
