/** Entry point: registers the elements; index.html places <sn-app>. */
import './sn-app.js';
