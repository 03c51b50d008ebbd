// The offline page's list of shots waiting on this tablet: the log page's outbox
// ($lib/shot-queue.ts keeps it in localStorage under "shotwright.outbox.<session id>").
(function () {
	var PREFIX = 'shotwright.outbox.';
	var box = document.getElementById('queued');
	var rows = [];
	for (var i = 0; i < localStorage.length; i++) {
		var key = localStorage.key(i);
		if (!key || key.indexOf(PREFIX) !== 0) continue;
		var sessionId = key.slice(PREFIX.length);
		var queue = [];
		try { queue = JSON.parse(localStorage.getItem(key) || '[]'); } catch (e) { queue = []; }
		if (Array.isArray(queue) && queue.length > 0) rows.push({ sessionId: sessionId, count: queue.length, refused: queue.filter(function (q) { return q.error; }).length });
	}
	box.textContent = '';
	if (rows.length === 0) {
		var none = document.createElement('p');
		none.textContent = 'None: nothing is waiting on this tablet.';
		box.appendChild(none);
	} else {
		var table = document.createElement('table');
		table.setAttribute('data-testid', 'offline-queue');
		table.innerHTML = '<thead><tr><th scope="col">Session</th><th scope="col">Waiting</th><th scope="col">Refused</th><th scope="col">Logging page</th></tr></thead>';
		var body = document.createElement('tbody');
		rows.forEach(function (r) {
			var tr = document.createElement('tr');
			[r.sessionId, r.count + ' shot' + (r.count === 1 ? '' : 's'), r.refused ? '✕ ' + r.refused : '—'].forEach(function (text) {
				var td = document.createElement('td');
				td.textContent = text;
				tr.appendChild(td);
			});
			var link = document.createElement('td');
			var a = document.createElement('a');
			a.href = '/sessions/' + encodeURIComponent(r.sessionId) + '/log';
			a.textContent = 'Log shots';
			link.appendChild(a);
			tr.appendChild(link);
			body.appendChild(tr);
		});
		table.appendChild(body);
		box.appendChild(table);
	}
	document.getElementById('retry').addEventListener('click', function () { location.reload(); });
})();
